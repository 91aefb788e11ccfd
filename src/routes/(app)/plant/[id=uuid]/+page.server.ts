import { error } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { statusChangeSchema } from '$lib/schemas/master';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import * as equipment from '$lib/server/equipment';
import { personOf, RecordError } from '$lib/server/records';
import { cyclesOfEquipment } from '$lib/server/sip-deviations';
import { workOrdersOfEquipment } from '$lib/server/work-orders';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const found = await equipment.getEquipment(event.params.id);
	if (!found) error(404, 'No such equipment.');
	return {
		equipment: {
			...found,
			versions: found.versions.map((v) => ({ ...v, recordedAt: v.recordedAt.toISOString() })),
			log: found.log.map((l) => ({ ...l, at: l.at.toISOString() })),
			statuses: undefined
		},
		workOrders: (await workOrdersOfEquipment(found.id)).sort((a, b) =>
			b.number.localeCompare(a.number)
		),
		cycles: await cyclesOfEquipment(found.id),
		mayChange: user.roles.includes('planner'),
		mayQuarantine: user.roles.includes('quality'),
		quarantineForm: await superValidate(zod4(statusChangeSchema), { id: 'quarantine' })
	};
};

async function quarantine(event: RequestEvent, on: boolean) {
	const user = await requireRole(event, 'quality');
	const form = await superValidate(event.request, zod4(statusChangeSchema), { id: 'quarantine' });
	if (!form.valid) return refused(form);
	try {
		await equipment.changeQuarantine(
			personOf(user),
			event.params.id,
			on,
			form.data.reason,
			event.getClientAddress()
		);
	} catch (e) {
		if (e instanceof RecordError) return setError(form, 'reason', e.message, { status: e.status });
		throw e;
	}
	form.data.reason = '';
	return message(form, {
		kind: 'ok',
		text: on
			? 'Quarantined. The change is in the log.'
			: 'Back in service. The change is in the log.'
	});
}

export const actions: Actions = {
	quarantine: (event) => quarantine(event, true),
	endQuarantine: (event) => quarantine(event, false)
};
