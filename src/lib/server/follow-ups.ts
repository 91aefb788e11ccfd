import { and, asc, eq, gt, inArray } from 'drizzle-orm';
import { env } from '$env/dynamic/private';
import { siteToday } from '$lib/fitness';
import { db } from './db/index';
import { equipment, sipCycles, workOrders, workOrderTransitions } from './db/schema/index';
import { notifyFollowUp } from './notify';
import { findProcedureByCode, getVersion } from './procedures';
import { siteOrFail, type Recorder } from './records';
import { createWorkOrder } from './work-orders';

/**
 * Follow-ups (9/10 item 3): a procedure may name another to do after the first steam
 * sterilisation that follows the work — the re-tightening check after a diaphragm change. When the
 * first SIP cycle after a release is reported, the follow-up work order is made at once, due
 * within the site's set time (FOLLOW_UP_DUE_HOURS, 48 h by default), and the Planners are told by
 * e-mail. One per work order followed up, however many cycles or runs (the unique index
 * work_orders_follow_up_once decides, migration 0020); the PM scheduler's runs catch up any that
 * a crash between the cycle and the follow-up left out.
 */
export const FOLLOW_UPS: Recorder = { kind: 'system', name: 'follow-up scheduler' };

export const followUpDueHours = () => {
	const v = Number(env.FOLLOW_UP_DUE_HOURS ?? 48);
	return Number.isInteger(v) && v >= 1 && v <= 720 ? v : 48;
};

const isFollowUpTaken = (e: unknown) => {
	const cause = (e as { cause?: unknown })?.cause ?? e;
	const c = cause as { code?: string; constraint_name?: string };
	return c?.code === '23505' && c.constraint_name === 'work_orders_follow_up_once';
};

export type MadeFollowUp = { id: string; number: string; followsUp: string; tag: string };

/**
 * Makes the follow-ups that are due: released work orders (on one piece of equipment, or all)
 * whose procedure names a follow-up, with a SIP cycle started after the release, and none made
 * yet. Returns what it made.
 */
export async function createDueFollowUps(equipmentId?: string): Promise<MadeFollowUp[]> {
	const released = await db()
		.select({
			id: workOrders.id,
			number: workOrders.number,
			equipmentId: workOrders.equipmentId,
			tag: equipment.tag,
			procedureVersionId: workOrders.procedureVersionId,
			releasedAt: workOrderTransitions.recordedAt
		})
		.from(workOrderTransitions)
		.innerJoin(workOrders, eq(workOrders.id, workOrderTransitions.workOrderId))
		.innerJoin(equipment, eq(equipment.id, workOrders.equipmentId))
		.where(
			and(
				eq(workOrderTransitions.kind, 'released'),
				equipmentId ? eq(workOrders.equipmentId, equipmentId) : undefined
			)
		)
		.orderBy(asc(workOrderTransitions.auditSeq));
	if (!released.length) return [];
	const taken = new Set(
		(
			await db()
				.select({ followsUp: workOrders.followsUp })
				.from(workOrders)
				.where(
					and(
						eq(workOrders.kind, 'follow_up'),
						inArray(
							workOrders.followsUp,
							released.map((r) => r.id)
						)
					)
				)
		).map((r) => r.followsUp)
	);
	const site = await siteOrFail();
	const made: MadeFollowUp[] = [];
	for (const r of released) {
		if (taken.has(r.id)) continue;
		const [first] = await db()
			.select({ startedAt: sipCycles.startedAt, endedAt: sipCycles.endedAt })
			.from(sipCycles)
			.where(and(eq(sipCycles.equipmentId, r.equipmentId), gt(sipCycles.startedAt, r.releasedAt)))
			.orderBy(asc(sipCycles.startedAt))
			.limit(1);
		if (!first) continue;
		const version = await getVersion(r.procedureVersionId);
		const code = version?.version.content.followUpCode;
		if (!code) continue;
		const procedureId = await findProcedureByCode(code);
		if (!procedureId) continue; // checked when the procedure was approved; gone since would be odd
		const hours = followUpDueHours();
		const dueBy = new Date(first.endedAt.getTime() + hours * 3_600_000);
		try {
			const wo = await createWorkOrder(
				FOLLOW_UPS,
				{
					kind: 'follow_up',
					equipmentId: r.equipmentId,
					procedureId,
					dueOn: siteToday(site.timeZone, dueBy),
					priority: 'high',
					assignees: [],
					notes: `Follow-up of ${r.number} (${version.procedure.code}): the first SIP cycle after its release started ${first.startedAt.toISOString()}; due within ${hours} h of that cycle's end.`,
					followsUp: r.id
				},
				null,
				(tx, created) =>
					notifyFollowUp(
						tx,
						{ id: created.id, number: created.number, tag: r.tag, procedureCode: code },
						{ number: r.number, procedureCode: version.procedure.code },
						{ startedAt: first.startedAt, dueBy, hours },
						site.timeZone,
						created.auditSeq
					).then(() => undefined)
			);
			made.push({ id: wo.id, number: wo.number, followsUp: r.id, tag: r.tag });
		} catch (e) {
			if (!isFollowUpTaken(e)) throw e;
		}
	}
	return made;
}

/** The work order a follow-up follows, and the follow-ups of a work order (links on its page). */
export async function followUpLinks(wo: { id: string; followsUp: string | null }) {
	const [of] = wo.followsUp
		? await db()
				.select({ id: workOrders.id, number: workOrders.number })
				.from(workOrders)
				.where(eq(workOrders.id, wo.followsUp))
		: [];
	const followUps = await db()
		.select({ id: workOrders.id, number: workOrders.number })
		.from(workOrders)
		.where(and(eq(workOrders.kind, 'follow_up'), eq(workOrders.followsUp, wo.id)));
	return { followsUp: of ?? null, followUps };
}
