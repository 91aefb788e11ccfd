import { error } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { siteToday } from '$lib/fitness';
import { calibrationSchema, changeInstrumentSchema } from '$lib/schemas/master';
import { requireRole } from '$lib/server/auth/guard';
import { newVersionAction, refused } from '$lib/server/forms';
import * as instruments from '$lib/server/instruments';
import { currentSite } from '$lib/server/plant';
import { personOf, RecordError } from '$lib/server/records';
import { usesOfInstrument } from '$lib/server/work-orders';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const site = (await currentSite())!;
	const today = siteToday(site.timeZone);
	const found = await instruments.getInstrument(event.params.id, today);
	if (!found) error(404, 'No such instrument.');
	const c = found.current;
	return {
		today,
		instrument: {
			id: found.id,
			code: found.code,
			current: { ...c, recordedAt: c.recordedAt.toISOString() },
			versions: found.versions.map((v) => ({ ...v, recordedAt: v.recordedAt.toISOString() })),
			calibrations: found.calibrations.map((k) => ({
				...k,
				recordedAt: k.recordedAt.toISOString()
			})),
			fitness: found.fitness
		},
		// Traceability (5/10): every work order step that used it, for when it is found out of tolerance.
		uses: (await usesOfInstrument(found.id)).map((u) => ({
			...u,
			performedAt: u.performedAt.toISOString()
		})),
		mayCalibrate: user.roles.includes('planner') || user.roles.includes('quality'),
		mayChange: user.roles.includes('planner'),
		calibrationForm: await superValidate(zod4(calibrationSchema), { id: 'calibration' }),
		changeForm: await superValidate(
			{
				kind: c.kind,
				description: c.description,
				rangeMin: c.rangeMin,
				rangeMax: c.rangeMax,
				unit: c.unit,
				uncertaintyU95: c.uncertaintyU95,
				retired: c.retired,
				fromVersion: c.version,
				reason: ''
			},
			zod4(changeInstrumentSchema),
			{ id: 'change', errors: false }
		)
	};
};

export const actions: Actions = {
	calibrate: async (event) => {
		const user = await requireRole(event, 'planner', 'quality');
		const form = await superValidate(event.request, zod4(calibrationSchema), { id: 'calibration' });
		if (!form.valid) return refused(form);
		try {
			await instruments.recordCalibration(
				personOf(user),
				event.params.id,
				form.data,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof RecordError)
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			throw e;
		}
		return message(form, { kind: 'ok', text: 'Calibration recorded.' });
	},
	change: (event) =>
		newVersionAction(event, changeInstrumentSchema, (by, fromVersion, details, reason) =>
			instruments.changeInstrument(
				by,
				event.params.id,
				fromVersion,
				details,
				reason,
				event.getClientAddress()
			)
		)
};
