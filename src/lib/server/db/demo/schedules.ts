import { count, eq } from 'drizzle-orm';
import { addDays, siteToday } from '../../../fitness';
import { createApiToken } from '../../api-tokens';
import * as equipment from '../../equipment';
import { recordPlantUsage, usageReportSchema } from '../../plant-usage';
import { currentSite } from '../../plant';
import { createSchedule } from '../../pm';
import * as procedures from '../../procedures';
import { personOf } from '../../records';
import { db } from '../index';
import { demoPerson } from './people';
import { apiTokens, areas, pmSchedules } from '../schema/index';

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
	const planner = personOf(await demoPerson('planner'));
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

/**
 * The demo plant's control system (9/10): a usage token made by the demo Administrator (its value
 * is not kept anywhere: create another on People and access → API tokens to report cycles
 * yourself), and SIP cycles it reported over the last days — saturated steam on three valves,
 * and one cycle on XV-3106 yesterday whose 121 °C at 1.2 bar absolute is not saturated steam
 * (about 104.8 °C there, IAPWS-IF97), a deviation waiting for Quality. Invented data.
 * Idempotent: nothing is added when any token exists.
 */
export async function seedDemoPlantUsage() {
	const [existing] = await db().select({ n: count() }).from(apiTokens);
	if ((existing?.n ?? 0) > 0) return { sipCycles: 0 };
	const name = 'Fill line control system';
	const made = await createApiToken(await demoPerson('admin'), { name, scope: 'usage' });
	const token = { kind: 'token' as const, id: made.id, name };
	const day = 86_400_000;
	const now = Date.now();
	let cycles = 0;
	const report = async (tag: string, daysAgo: number, peak = 121.4, bar = 2.08) => {
		const start = Math.floor((now - daysAgo * day) / 60_000) * 60_000;
		const parsed = usageReportSchema.parse({
			sipCycle: {
				startedAt: new Date(start).toISOString(),
				endedAt: new Date(start + 50 * 60_000).toISOString(),
				peakTemperatureC: peak,
				absolutePressureBar: bar,
				holdMinutes: 20
			}
		});
		await recordPlantUsage(token, { id: (await equipment.findByTag(tag))!, tag }, parsed, null);
		cycles++;
	};
	for (const daysAgo of [6, 4, 2]) {
		await report('XV-3104', daysAgo + 0.3);
		await report('XV-3106', daysAgo + 0.2);
		await report('XV-4203', daysAgo + 0.1);
	}
	await report('XV-3106', 1, 121, 1.2);
	return { sipCycles: cycles };
}
