import { addDays } from '$lib/fitness';
import { isoWeek, mondayOf } from '$lib/calc/schedule';
import { requireRole } from '$lib/server/auth/guard';
import { listSchedules, ruleWords } from '$lib/server/pm';
import type { PageServerLoad } from './$types';

/**
 * PM schedules (9/10): what is overdue, what falls due soon, the next 12 weeks as a calendar,
 * and every schedule with where it stands for each piece of equipment it covers.
 */
export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	const { today, schedules } = await listSchedules();
	const rows = schedules.flatMap((s) =>
		s.targets.map((t) => ({
			scheduleId: s.id,
			title: s.version.title,
			procedureCode: s.procedureCode,
			rule: ruleWords(s.rule),
			usageUnit: s.rule.usage?.kind ?? null,
			active: s.version.active,
			tag: t.tag,
			equipmentId: t.equipmentId,
			state: t.due.state,
			decidedBy: t.due.decidedBy,
			dueOn: t.due.dueOn,
			graceEndsOn: t.due.graceEndsOn,
			dueAtUsage: t.due.dueAtUsage,
			usageNow: t.usageNow,
			projectedOn: t.projectedOn,
			nextOn: t.nextOn,
			made: t.made
		}))
	);
	const active = rows.filter((r) => r.active);
	const first = mondayOf(today);
	const weeks = Array.from({ length: 12 }, (_, i) => {
		const start = addDays(first, i * 7);
		const end = addDays(start, 6);
		return {
			start,
			end,
			week: isoWeek(start).week,
			items: active
				.filter((r) => r.state !== 'overdue' && r.nextOn && r.nextOn >= start && r.nextOn <= end)
				.sort((a, b) => (a.nextOn! < b.nextOn! ? -1 : a.nextOn! > b.nextOn! ? 1 : 0))
		};
	});
	return {
		today,
		overdue: active.filter((r) => r.state === 'overdue'),
		dueSoon: active.filter((r) => r.state === 'due' || r.state === 'due_soon'),
		weeks,
		schedules: [...schedules]
			.sort((a, b) => a.version.title.localeCompare(b.version.title))
			.map((s) => ({
				id: s.id,
				title: s.version.title,
				version: s.version.version,
				active: s.version.active,
				procedureCode: s.procedureCode,
				rule: ruleWords(s.rule),
				leadDays: s.version.leadDays,
				graceDays: s.version.graceDays,
				targets: rows.filter((r) => r.scheduleId === s.id)
			})),
		mayPlan: user.roles.includes('planner')
	};
};
