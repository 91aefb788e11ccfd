import { error, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { equipmentFormSchema, type EquipmentClass } from '$lib/equipment';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import * as equipment from '$lib/server/equipment';
import { currentSite } from '$lib/server/plant';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	const found = await equipment.getEquipment(event.params.id);
	if (!found) error(404, 'No such equipment.');
	const site = (await currentSite())!;
	const v = found.current;
	const form = await superValidate(
		{
			tag: found.tag,
			areaId: v.areaId,
			equipmentClass: v.equipmentClass as EquipmentClass,
			description: v.description,
			gmpCritical: v.gmpCritical,
			attributes: v.attributes,
			fromVersion: v.version,
			reason: ''
		},
		zod4(equipmentFormSchema),
		{ errors: false }
	);
	return {
		form,
		areas: await equipment.areasOf(site.id),
		id: found.id,
		tag: found.tag,
		version: v.version
	};
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(equipmentFormSchema));
		if (!form.valid) return refused(form);
		const { tag: _t, fromVersion, reason, ...details } = form.data;
		void _t;
		try {
			await equipment.changeEquipment(
				personOf(user),
				event.params.id,
				fromVersion,
				details,
				reason,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof RecordError) {
				if (e.status !== 409 && (e.field === 'reason' || e.field === 'areaId'))
					return setError(form, e.field, e.message, { status: e.status });
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			}
			throw e;
		}
		redirect(303, `/plant/${event.params.id}`);
	}
};
