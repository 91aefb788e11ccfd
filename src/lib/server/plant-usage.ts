import { and, desc, eq, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { z } from 'zod';
import { saturationTemperature } from '$lib/calc/steam';
import { siteToday } from '$lib/fitness';
import type { TokenActor } from './api-tokens';
import { db } from './db/index';
import { recordEventNow } from './audit/now';
import { equipmentUsage, sipCycles, sipDeviations } from './db/schema/index';
import { lockEquipment, recordUsage } from './equipment';
import { createDueFollowUps } from './follow-ups';
import { notifySipDeviation } from './notify';
import { appendRecordEvent, RecordError, siteOrFail } from './records';
import { nextNumber } from './work-orders';
import { env } from '$env/dynamic/private';

/**
 * Usage reported by the plant's control system (9/10 item 2): steam-in-place cycles and operating
 * hours, through POST /api/v1/equipment/{tag}/usage with a usage-scoped API token. A cycle is
 * recorded once per equipment and start time; the same report again is answered the same. Each
 * cycle's peak temperature is checked against saturated steam at its absolute pressure
 * (IAPWS-IF97 region 4): outside the tolerance (SIP_STEAM_TOLERANCE_C, 2 °C by default) the cycle
 * is flagged for Quality.
 */
const instant = (what: string) =>
	z.iso.datetime({
		offset: true,
		error: `${what} is a date and time with its zone, e.g. 2026-12-01T08:00:00Z.`
	});
const number = (what: string, min: number, max: number, unit: string) =>
	z
		.number({ error: `${what} is a number (${unit}).` })
		.min(min, `${what} is at least ${min} ${unit}.`)
		.max(max, `${what} is at most ${max} ${unit}.`);

export const usageReportSchema = z
	.strictObject({
		sipCycle: z
			.strictObject({
				startedAt: instant('sipCycle.startedAt'),
				endedAt: instant('sipCycle.endedAt'),
				count: z
					.number({ error: 'sipCycle.count is a whole number from 1.' })
					.int('sipCycle.count is a whole number from 1.')
					.min(1, 'sipCycle.count is a whole number from 1.')
					.max(100, 'sipCycle.count is at most 100 in one report.')
					.default(1),
				peakTemperatureC: number('sipCycle.peakTemperatureC', 0, 200, '°C'),
				absolutePressureBar: number('sipCycle.absolutePressureBar', 0.01, 20, 'bar absolute'),
				holdMinutes: number('sipCycle.holdMinutes', 0, 24 * 60, 'minutes')
			})
			.refine((c) => Date.parse(c.endedAt) > Date.parse(c.startedAt), {
				message: 'sipCycle.endedAt must be after sipCycle.startedAt.',
				path: ['endedAt']
			})
			.optional(),
		operatingHours: z
			.strictObject({
				hours: number('operatingHours.hours', 0.001, 10_000, 'h'),
				until: instant('operatingHours.until')
			})
			.optional()
	})
	.refine((r) => r.sipCycle || r.operatingHours, {
		message: 'Report a sipCycle, operatingHours, or both.'
	});
export type UsageReport = z.infer<typeof usageReportSchema>;

export const steamTolerance = () => {
	const v = Number(env.SIP_STEAM_TOLERANCE_C ?? 2);
	return Number.isFinite(v) && v > 0 ? v : 2;
};

/** The peak temperature against saturated steam at the absolute pressure (°C). */
export function steamCheck(
	peakTemperatureC: number,
	absolutePressureBar: number,
	tolerance: number
) {
	const t = saturationTemperature(absolutePressureBar / 10);
	if (!t.ok) throw new RecordError(t.message, 'sipCycle.absolutePressureBar', 400);
	const saturation = t.value - 273.15;
	return {
		saturationTemperatureC: Math.round(saturation * 100) / 100,
		steamMatches: Math.abs(peakTemperatureC - saturation) <= tolerance
	};
}

type CycleRow = typeof sipCycles.$inferSelect;
const cycleAnswer = (c: CycleRow) => ({
	id: c.id,
	startedAt: c.startedAt.toISOString(),
	endedAt: c.endedAt.toISOString(),
	count: c.count,
	peakTemperatureC: c.peakTemperatureC,
	absolutePressureBar: c.absolutePressureBar,
	holdMinutes: c.holdMinutes,
	saturationTemperatureC: c.saturationTemperatureC,
	steamMatches: c.steamMatches,
	toleranceC: c.toleranceC
});

/** Records a report (one transaction, under the equipment's lock); the answer names what is stored. */
export async function recordPlantUsage(
	token: TokenActor,
	equipment: { id: string; tag: string },
	report: UsageReport,
	clientAddress: string | null
) {
	const { timeZone } = await siteOrFail();
	const answer = await db().transaction(async (tx) => {
		await lockEquipment(tx, equipment.id);
		let cycle: ReturnType<typeof cycleAnswer> | null = null;
		if (report.sipCycle) {
			const c = report.sipCycle;
			const startedAt = new Date(c.startedAt);
			const [stored] = await tx
				.select()
				.from(sipCycles)
				.where(and(eq(sipCycles.equipmentId, equipment.id), eq(sipCycles.startedAt, startedAt)));
			if (stored) cycle = cycleAnswer(stored);
			else {
				const tolerance = steamTolerance();
				const check = steamCheck(c.peakTemperatureC, c.absolutePressureBar, tolerance);
				const values = {
					startedAt,
					endedAt: new Date(c.endedAt),
					count: c.count,
					peakTemperatureC: c.peakTemperatureC,
					absolutePressureBar: c.absolutePressureBar,
					holdMinutes: c.holdMinutes,
					...check,
					toleranceC: tolerance
				};
				const rec = await appendRecordEvent(tx, token, {
					action: check.steamMatches ? 'equipment.sip_cycle' : 'equipment.sip_cycle_off_steam',
					entityType: 'equipment',
					entityId: equipment.id,
					newValues: {
						...values,
						startedAt: c.startedAt,
						endedAt: c.endedAt,
						tag: equipment.tag
					},
					clientAddress
				});
				const [row] = await tx
					.insert(sipCycles)
					.values({
						id: randomUUID(),
						equipmentId: equipment.id,
						tokenId: token.id,
						...values,
						...rec
					})
					.returning();
				await recordUsage(
					tx,
					token,
					equipment.id,
					{
						kind: 'sip_cycles',
						amount: c.count,
						occurredAt: values.endedAt,
						note: `SIP cycle reported by ${token.name}`
					},
					clientAddress
				);
				if (!check.steamMatches) {
					const number = await nextNumber(tx, 'DEV', siteToday(timeZone).slice(0, 4));
					const id = randomUUID();
					const description =
						`SIP cycle on ${equipment.tag} started ${c.startedAt}: peak ${c.peakTemperatureC} °C at ` +
						`${c.absolutePressureBar} bar absolute, where saturated steam is ${check.saturationTemperatureC} °C ` +
						`(tolerance ±${tolerance} °C). Air or superheat in the steam may mean the cycle did not sterilise.`;
					const dev = await appendRecordEvent(tx, token, {
						action: 'sip_deviation.raise',
						entityType: 'sip_deviation',
						entityId: id,
						newValues: { number, sipCycleId: row!.id, tag: equipment.tag, description },
						clientAddress
					});
					await tx
						.insert(sipDeviations)
						.values({ id, number, sipCycleId: row!.id, description, ...dev });
					await notifySipDeviation(
						tx,
						{ id, number, tag: equipment.tag, description },
						dev.auditSeq
					);
				}
				cycle = cycleAnswer(row!);
			}
		}
		if (report.operatingHours)
			await recordUsage(
				tx,
				token,
				equipment.id,
				{
					kind: 'operating_hours',
					amount: report.operatingHours.hours,
					occurredAt: new Date(report.operatingHours.until),
					note: `Operating hours reported by ${token.name}`
				},
				clientAddress
			);
		return { equipment: equipment.tag, sipCycle: cycle };
	});
	// A cycle after a release may call for the follow-up now (9/10 item 3); made once, after
	// the cycle is committed (the PM scheduler's runs catch up if this process stops here).
	if (report.sipCycle) await createDueFollowUps(equipment.id);
	return answer;
}

/**
 * What a plant display reads (GET /api/v1/equipment/{tag}/usage, scope usage:read): the counters
 * and the latest SIP cycles, newest first. Each read is an audit event with the token as actor.
 */
export async function readPlantUsage(
	token: TokenActor,
	equipment: { id: string; tag: string },
	limit: number,
	clientAddress: string | null
) {
	const totals = await db()
		.select({
			kind: equipmentUsage.kind,
			total: sql<number>`coalesce(sum(${equipmentUsage.amount}), 0)::float8`
		})
		.from(equipmentUsage)
		.where(eq(equipmentUsage.equipmentId, equipment.id))
		.groupBy(equipmentUsage.kind);
	const cycles = await db()
		.select()
		.from(sipCycles)
		.where(eq(sipCycles.equipmentId, equipment.id))
		.orderBy(desc(sipCycles.startedAt))
		.limit(limit);
	await recordEventNow({
		actor: token,
		action: 'equipment.usage_read',
		entityType: 'equipment',
		entityId: equipment.id,
		newValues: { tag: equipment.tag, limit },
		clientAddress
	});
	const total = (kind: string) => Number(totals.find((t) => t.kind === kind)?.total ?? 0);
	return {
		equipment: equipment.tag,
		sipCycles: total('sip_cycles'),
		operatingHours: total('operating_hours'),
		latestCycles: cycles.map(cycleAnswer)
	};
}
