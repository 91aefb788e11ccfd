import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { siteToday } from '$lib/fitness';
import { pmScheduleFormSchema } from '$lib/schemas/pm';
import { requireRole } from '$lib/server/auth/guard';
import * as equipment from '$lib/server/equipment';
import { currentSite } from '$lib/server/plant';
import { createSchedule } from '$lib/server/pm';
import * as procedures from '$lib/server/procedures';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

/** A new PM schedule (9/10, Planner). */
export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	const site = (await currentSite())!;
	const form = await superValidate(
		{
			target: 'equipment' as const,
			intervalEvery: 12,
			intervalUnit: 'month' as const,
			leadDays: 14,
			graceDays: 7,
			leadUsage: 0,
			graceUsage: 0,
			startsOn: siteToday(site.timeZone)
		},
		zod4(pmScheduleFormSchema),
		{ errors: false }
	);
	return {
		form,
		equipment: (await equipment.listEquipment(site.id)).map((e) => ({
			id: e.id,
			tag: e.tag,
			description: e.description
		})),
		areas: await equipment.areasOf(site.id),
		procedures: (await procedures.listProcedures(site.id))
			.filter((p) => p.effectiveVersion !== null)
			.map((p) => ({ id: p.id, code: p.code, title: p.title }))
	};
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(pmScheduleFormSchema));
		if (!form.valid) return fail(400, { form });
		try {
			await createSchedule(personOf(user), form.data, event.getClientAddress());
		} catch (e) {
			if (e instanceof RecordError) {
				const field = (e.field ?? 'title') as 'title';
				return setError(form, field in form.data ? field : 'title', e.message, {
					status: e.status
				});
			}
			throw e;
		}
		redirect(303, '/pm');
	}
};
