import { count, eq } from 'drizzle-orm';
import { addDays, siteToday } from '../../../fitness';
import * as equipment from '../../equipment';
import { currentSite } from '../../plant';
import { createSchedule } from '../../pm';
import * as procedures from '../../procedures';
import { personOf } from '../../records';
import { db } from '../index';
import { accounts, areas, pmSchedules } from '../schema/index';

/**
 * Demo PM schedules (9/10), planned by the demo Planner, with start dates relative to the day of
 * seeding so that the demo always has one overdue, one due soon and several in the next 12
 * weeks. Invented data. Idempotent: nothing is added when any schedule exists.
 */
export async function seedDemoSchedules() {
	const [existing] = await db().select({ n: count() }).from(pmSchedules);
	if ((existing?.n ?? 0) > 0) return { schedules: 0 };
	const site = await currentSite();
	if (!site) throw new Error('the demo site is missing: seed the plant first');
	const today = siteToday(site.timeZone);
	const [p] = await db().select().from(accounts).where(eq(accounts.username, 'planner'));
	if (!p) throw new Error('demo account planner is missing: seed the accounts first');
	const planner = personOf({
		id: p.id,
		username: p.username,
		name: p.fullName,
		email: p.email,
		roles: p.roles,
		mustChangePassword: false
	});
	const proc = async (code: string) => (await procedures.findProcedureByCode(code))!;
	const tag = async (t: string) => (await equipment.findByTag(t))!;
	const [buffer] = await db().select({ id: areas.id }).from(areas).where(eq(areas.code, 'BUF'));
	const diaphragm = {
		intervalEvery: 12,
		intervalUnit: 'month' as const,
		usageKind: 'sip_cycles' as const,
		usageLimit: 100,
		leadDays: 14,
		graceDays: 7,
		leadUsage: 10,
		graceUsage: 5
	};
	const plans = [
		{
			...diaphragm,
			title: 'Diaphragm, buffer-area valves',
			target: 'class' as const,
			areaId: buffer!.id,
			equipmentClass: 'diaphragm_valve' as const,
			procedureId: await proc('MP-DV-01'),
			startsOn: addDays(today, -320)
		},
		{
			...diaphragm,
			title: 'Diaphragm XV-3104',
			target: 'equipment' as const,
			equipmentId: await tag('XV-3104'),
			procedureId: await proc('MP-DV-01'),
			startsOn: addDays(today, -380) // a year and two weeks ago: overdue
		},
		{
			...diaphragm,
			intervalEvery: 6,
			usageLimit: 60,
			title: 'Diaphragm XV-3106 (hot loop, half interval)',
			target: 'equipment' as const,
			equipmentId: await tag('XV-3106'),
			procedureId: await proc('MP-DV-01'),
			startsOn: addDays(today, -175) // due within its lead time
		},
		{
			intervalEvery: 6,
			intervalUnit: 'month' as const,
			usageKind: null,
			usageLimit: null,
			leadDays: 21,
			graceDays: 14,
			leadUsage: 0,
			graceUsage: 0,
			title: 'Pump seal P-3101',
			target: 'equipment' as const,
			equipmentId: await tag('P-3101'),
			procedureId: await proc('MP-PU-01'),
			startsOn: addDays(today, -120)
		},
		{
			intervalEvery: 3,
			intervalUnit: 'month' as const,
			usageKind: 'operating_hours' as const,
			usageLimit: 500,
			leadDays: 14,
			graceDays: 7,
			leadUsage: 50,
			graceUsage: 25,
			title: 'Pump seal P-4201',
			target: 'equipment' as const,
			equipmentId: await tag('P-4201'),
			procedureId: await proc('MP-PU-01'),
			startsOn: addDays(today, -40)
		}
	];
	for (const plan of plans) await createSchedule(planner, plan);
	return { schedules: plans.length };
}
