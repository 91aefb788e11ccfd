import { asc, desc, eq, isNull, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { sipDeviationSignedContent, type DeviationDecision } from '$lib/work';
import type { User } from './auth/guard';
import { db } from './db/index';
import { equipment, sipCycles, sipDeviationDispositions, sipDeviations } from './db/schema/index';
import { appendRecordEvent, mustHold, personOf, RecordError } from './records';
import { reauthenticate, recordSignature, signaturesOf } from './signatures/index';

/**
 * Deviations of SIP cycles (9/10 item 2): a cycle reported by the plant whose peak temperature
 * does not match saturated steam at its pressure is raised as a deviation with the cycle
 * (plant-usage.ts), waits in Quality's queue, and is dispositioned by Quality with a Reviewed
 * signature over the cycle, the check and the decision. No person took part in a reported
 * cycle, so any Quality person may disposition it.
 */

const base = () =>
	db()
		.select({
			id: sipDeviations.id,
			number: sipDeviations.number,
			description: sipDeviations.description,
			raisedAt: sipDeviations.recordedAt,
			raisedBy: sipDeviations.recordedByName,
			auditSeq: sipDeviations.auditSeq,
			tag: equipment.tag,
			equipmentId: equipment.id,
			cycle: sipCycles,
			dispositionId: sipDeviationDispositions.id,
			decision: sipDeviationDispositions.decision,
			dispositionText: sipDeviationDispositions.text,
			dispositionedBy: sipDeviationDispositions.recordedByName,
			dispositionedAt: sipDeviationDispositions.recordedAt
		})
		.from(sipDeviations)
		.innerJoin(sipCycles, eq(sipCycles.id, sipDeviations.sipCycleId))
		.innerJoin(equipment, eq(equipment.id, sipCycles.equipmentId))
		.leftJoin(sipDeviationDispositions, eq(sipDeviationDispositions.deviationId, sipDeviations.id));
type Row = Awaited<ReturnType<typeof base>>[number];

/** The record the disposition signs (and whose signature is checked against it later). */
function signedRecord(d: Row, decision: DeviationDecision, text: string) {
	const c = d.cycle;
	return sipDeviationSignedContent({
		id: d.id,
		number: d.number,
		equipment: d.tag,
		description: d.description,
		cycle: {
			id: c.id,
			startedAt: c.startedAt.toISOString(),
			endedAt: c.endedAt.toISOString(),
			peakTemperatureC: c.peakTemperatureC,
			absolutePressureBar: c.absolutePressureBar,
			holdMinutes: c.holdMinutes,
			saturationTemperatureC: c.saturationTemperatureC,
			toleranceC: c.toleranceC
		},
		decision,
		text
	});
}

/** Open deviations of SIP cycles, oldest first (Quality's queue). */
export async function openSipDeviations() {
	return base().where(isNull(sipDeviationDispositions.id)).orderBy(asc(sipDeviations.auditSeq));
}

/** One deviation with its cycle, its disposition and the signature checked against the record. */
export async function getSipDeviation(id: string) {
	const [d] = await base().where(eq(sipDeviations.id, id));
	if (!d) return undefined;
	const signatures = d.dispositionId
		? await signaturesOf(signedRecord(d, d.decision as DeviationDecision, d.dispositionText ?? ''))
		: [];
	return { ...d, signatures };
}

/** Quality dispositions the deviation with a Reviewed signature over the cycle and the decision. */
export async function dispositionSipDeviation(
	user: User,
	id: string,
	decision: DeviationDecision,
	text: string,
	password: string,
	clientAddress: string | null = null
) {
	const by = personOf(user);
	await mustHold(by, ['quality'], 'disposition deviations', { type: 'sip_deviation', id });
	const words = text.trim();
	if (!words)
		throw new RecordError('Write the disposition: what was decided and why.', 'text', 422);
	const d0 = await getSipDeviation(id);
	if (!d0) throw new RecordError('There is no such deviation.', undefined, 404);
	if (d0.dispositionId)
		throw new RecordError('This deviation is already dispositioned.', undefined, 409);
	const record0 = signedRecord(d0, decision, words);
	await reauthenticate(user, password, { record: record0, meaning: 'reviewed' }, clientAddress);
	return db().transaction(async (tx) => {
		await tx.execute(
			sql`select pg_advisory_xact_lock(hashtextextended(${'sip_deviation:' + id}, 0))`
		);
		const [done] = await tx
			.select({ id: sipDeviationDispositions.id })
			.from(sipDeviationDispositions)
			.where(eq(sipDeviationDispositions.deviationId, id));
		if (done) throw new RecordError('This deviation is already dispositioned.', undefined, 409);
		const signature = await recordSignature(tx, user, record0, 'reviewed', clientAddress);
		const rec = await appendRecordEvent(tx, by, {
			action: 'sip_deviation.disposition',
			entityType: 'sip_deviation',
			entityId: id,
			newValues: { number: d0.number, decision, text: words, signatureId: signature.id },
			clientAddress
		});
		await tx.insert(sipDeviationDispositions).values({
			id: randomUUID(),
			deviationId: id,
			decision,
			text: words,
			signatureId: signature.id,
			...rec
		});
		return signature;
	});
}

/** The latest SIP cycles the plant reported for a piece of equipment, each with its deviation if any. */
export async function cyclesOfEquipment(equipmentId: string, limit = 10) {
	const rows = await db()
		.select({
			id: sipCycles.id,
			startedAt: sipCycles.startedAt,
			endedAt: sipCycles.endedAt,
			count: sipCycles.count,
			peakTemperatureC: sipCycles.peakTemperatureC,
			absolutePressureBar: sipCycles.absolutePressureBar,
			saturationTemperatureC: sipCycles.saturationTemperatureC,
			steamMatches: sipCycles.steamMatches,
			reportedBy: sipCycles.recordedByName,
			deviationId: sipDeviations.id,
			deviationNumber: sipDeviations.number,
			dispositioned: sipDeviationDispositions.id
		})
		.from(sipCycles)
		.leftJoin(sipDeviations, eq(sipDeviations.sipCycleId, sipCycles.id))
		.leftJoin(sipDeviationDispositions, eq(sipDeviationDispositions.deviationId, sipDeviations.id))
		.where(eq(sipCycles.equipmentId, equipmentId))
		.orderBy(desc(sipCycles.startedAt))
		.limit(limit);
	return rows.map((r) => ({
		...r,
		startedAt: r.startedAt.toISOString(),
		endedAt: r.endedAt.toISOString(),
		dispositioned: r.dispositioned !== null
	}));
}
