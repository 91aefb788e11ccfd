import { redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { blankAttributes, equipmentFormSchema } from '$lib/equipment';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import * as equipment from '$lib/server/equipment';
import { currentSite } from '$lib/server/plant';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	const site = (await currentSite())!;
	const form = await superValidate(
		{
			tag: '',
			areaId: '',
			equipmentClass: 'diaphragm_valve',
			description: '',
			gmpCritical: true,
			attributes: blankAttributes('diaphragm_valve'),
			fromVersion: 0,
			reason: ''
		},
		zod4(equipmentFormSchema),
		{ errors: false }
	);
	return { form, areas: await equipment.areasOf(site.id) };
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(equipmentFormSchema));
		if (!form.valid) return refused(form);
		const site = (await currentSite())!;
		let id: string;
		try {
			const { fromVersion: _v, reason: _r, ...details } = form.data;
			void _v;
			void _r;
			id = await equipment.registerEquipment(
				personOf(user),
				site.id,
				details,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof RecordError) {
				if (e.field === 'tag' || e.field === 'areaId')
					return setError(form, e.field, e.message, { status: e.status });
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			}
			throw e;
		}
		redirect(303, `/plant/${id}`);
	}
};
