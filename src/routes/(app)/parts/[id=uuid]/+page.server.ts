import { error } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { siteToday } from '$lib/fitness';
import { changePartSchema, lotSchema } from '$lib/schemas/master';
import { requireRole } from '$lib/server/auth/guard';
import { newVersionAction, refused } from '$lib/server/forms';
import * as parts from '$lib/server/parts';
import { currentSite } from '$lib/server/plant';
import { personOf, RecordError } from '$lib/server/records';
import { fittingsOfLot } from '$lib/server/work-orders';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const found = await parts.getPart(event.params.id);
	if (!found) error(404, 'No such part.');
	const site = (await currentSite())!;
	const today = siteToday(site.timeZone);
	const c = found.current;
	return {
		today,
		part: {
			id: found.id,
			partNumber: found.partNumber,
			current: { ...c, recordedAt: c.recordedAt.toISOString() },
			versions: found.versions.map((v) => ({ ...v, recordedAt: v.recordedAt.toISOString() })),
			lots: found.lots.map((l) => ({
				...l,
				recordedAt: l.recordedAt.toISOString(),
				expired: l.expiresOn !== null && l.expiresOn < today
			}))
		},
		// Traceability (5/10): every equipment each lot was fitted to, through its work orders.
		fittings: (await fittingsOfLot(found.lots.map((l) => l.id))).map((f) => ({
			...f,
			performedAt: f.performedAt.toISOString()
		})),
		mayChange: user.roles.includes('planner'),
		lotForm: await superValidate(
			{ supplierLot: '', receivedOn: today, expiresOn: null, quantityReceived: 1 },
			zod4(lotSchema),
			{ id: 'lot', errors: false }
		),
		changeForm: await superValidate(
			{
				description: c.description,
				materialCode: c.materialCode,
				fromVersion: c.version,
				reason: ''
			},
			zod4(changePartSchema),
			{ id: 'change', errors: false }
		)
	};
};

export const actions: Actions = {
	lot: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(lotSchema), { id: 'lot' });
		if (!form.valid) return refused(form);
		try {
			await parts.receiveLot(personOf(user), event.params.id, form.data, event.getClientAddress());
		} catch (e) {
			if (e instanceof RecordError)
				return setError(form, e.field === 'receivedOn' ? 'receivedOn' : 'supplierLot', e.message, {
					status: e.status
				});
			throw e;
		}
		return message(form, { kind: 'ok', text: `Lot ${form.data.supplierLot} recorded.` });
	},
	change: (event) =>
		newVersionAction(event, changePartSchema, (by, fromVersion, details, reason) =>
			parts.changePart(by, event.params.id, fromVersion, details, reason, event.getClientAddress())
		)
};
