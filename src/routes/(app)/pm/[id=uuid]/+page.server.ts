import { error, fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { pmScheduleFormSchema } from '$lib/schemas/pm';
import { requireRole } from '$lib/server/auth/guard';
import * as equipment from '$lib/server/equipment';
import { currentSite } from '$lib/server/plant';
import { changeSchedule, getSchedule, ruleOf, ruleWords } from '$lib/server/pm';
import * as procedures from '$lib/server/procedures';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

/** One PM schedule (9/10): its versions and where it stands (readers); a change or a pause (Planner). */
export const load: PageServerLoad = async (event) => {
	const { user } = await event.parent();
	const found = await getSchedule(event.params.id);
	if (!found) error(404, 'No such schedule.');
	const c = found.current;
	const site = (await currentSite())!;
	const mayPlan = user.roles.includes('planner');
	return {
		schedule: {
			id: found.id,
			title: c.title,
			active: c.active,
			version: c.version,
			procedureCode: found.procedureCode,
			rule: ruleWords(found.rule),
			leadDays: c.leadDays,
			graceDays: c.graceDays,
			startsOn: c.startsOn
		},
		today: found.today,
		targets: found.targets.map((t) => ({
			equipmentId: t.equipmentId,
			tag: t.tag,
			state: t.due.state,
			nextOn: t.nextOn,
			made: t.made
		})),
		versions: found.versions.map((v) => ({
			version: v.version,
			title: v.title,
			active: v.active,
			reason: v.reason,
			by: v.recordedByName,
			at: v.recordedAt.toISOString(),
			rule: ruleWords(ruleOf(v))
		})),
		mayPlan,
		form: await superValidate(
			{
				title: c.title,
				target: c.equipmentId ? ('equipment' as const) : ('class' as const),
				equipmentId: c.equipmentId,
				areaId: c.areaId,
				equipmentClass: c.equipmentClass as never,
				procedureId: c.procedureId,
				intervalEvery: c.intervalEvery,
				intervalUnit: c.intervalUnit as never,
				usageKind: c.usageKind as never,
				usageLimit: c.usageLimit,
				leadDays: c.leadDays,
				graceDays: c.graceDays,
				leadUsage: c.leadUsage,
				graceUsage: c.graceUsage,
				startsOn: c.startsOn,
				active: c.active,
				reason: ''
			},
			zod4(pmScheduleFormSchema),
			{ errors: false }
		),
		equipment: mayPlan
			? (await equipment.listEquipment(site.id)).map((e) => ({
					id: e.id,
					tag: e.tag,
					description: e.description
				}))
			: [],
		areas: mayPlan ? await equipment.areasOf(site.id) : [],
		procedures: mayPlan
			? (await procedures.listProcedures(site.id))
					.filter((p) => p.effectiveVersion !== null)
					.map((p) => ({ id: p.id, code: p.code, title: p.title }))
			: []
	};
};

export const actions: Actions = {
	change: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(pmScheduleFormSchema));
		if (!form.valid) return fail(400, { form });
		if (!form.data.reason.trim())
			return setError(form, 'reason', 'Give the reason for the change.', { status: 422 });
		try {
			const { version } = await changeSchedule(
				personOf(user),
				event.params.id,
				form.data,
				form.data.reason,
				event.getClientAddress()
			);
			form.data.reason = '';
			return message(form, {
				kind: 'ok',
				text: `Saved as version ${version}${form.data.active ? '' : ': the schedule is paused and makes no work orders'}.`
			});
		} catch (e) {
			if (e instanceof RecordError) {
				if (e.field && e.field in form.data)
					return setError(form, e.field as 'title', e.message, { status: e.status });
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			}
			throw e;
		}
	}
};
