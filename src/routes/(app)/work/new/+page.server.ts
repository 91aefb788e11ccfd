import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { addDays, siteToday } from '$lib/fitness';
import { workOrderFormSchema } from '$lib/schemas/work';
import { requireRole } from '$lib/server/auth/guard';
import * as equipment from '$lib/server/equipment';
import { currentSite } from '$lib/server/plant';
import * as procedures from '$lib/server/procedures';
import { personOf, RecordError } from '$lib/server/records';
import * as work from '$lib/server/work-orders';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	const site = (await currentSite())!;
	const all = await equipment.listEquipment(site.id);
	const chosen = event.url.searchParams.get('equipment');
	const form = await superValidate(
		{
			kind: 'corrective' as const,
			priority: 'routine' as const,
			dueOn: addDays(siteToday(site.timeZone), 7),
			equipmentId: all.some((e) => e.id === chosen) ? chosen! : undefined,
			assignees: [],
			notes: ''
		},
		zod4(workOrderFormSchema),
		{ errors: false }
	);
	return {
		form,
		equipment: all.map((e) => ({
			id: e.id,
			tag: e.tag,
			description: e.description,
			equipmentClass: e.equipmentClass
		})),
		procedures: (await procedures.listProcedures(site.id))
			.filter((p) => p.effectiveVersion !== null)
			.map((p) => ({
				id: p.id,
				code: p.code,
				title: p.title,
				appliesTo: p.appliesTo,
				version: p.effectiveVersion!
			})),
		technicians: await work.assignableTechnicians()
	};
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(workOrderFormSchema));
		if (!form.valid) return fail(400, { form });
		let id: string;
		try {
			({ id } = await work.createWorkOrder(personOf(user), form.data, event.getClientAddress()));
		} catch (e) {
			if (e instanceof RecordError)
				return setError(
					form,
					(e.field === 'assignees' ? 'assignees._errors' : (e.field ?? 'equipmentId')) as never,
					e.message,
					{ status: e.status }
				);
			throw e;
		}
		redirect(303, `/work/${id}`);
	}
};
