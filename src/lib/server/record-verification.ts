import { and, asc, eq, gt, inArray, sql } from 'drizzle-orm';
import { verifyEntity, type Verification } from './audit/verify';
import { db } from './db/index';
import { auditEvent, recordPrints } from './db/schema/index';
import { releasedRecordOf } from './pdf/index';
import { loadState, recordContentHash } from './work-orders';

/** A record hash as printed: 64 hex digits; spaces and line breaks from copying off paper are dropped. */
export function readRecordHash(input: string): { hash: string } | { error: string } {
	const hash = input.replace(/\s+/g, '').toLowerCase();
	if (!hash) return { error: 'Enter the record hash from the verification block of the PDF.' };
	if (!/^[0-9a-f]*$/.test(hash))
		return {
			error:
				'A record hash has only the digits 0–9 and the letters a–f: check what you typed against the print.'
		};
	if (hash.length !== 64)
		return {
			error: `A record hash has 64 characters; this one has ${hash.length}. Check for a missing or extra character.`
		};
	return { hash };
}

export type RecordVerification =
	| { found: false; hash: string }
	| {
			found: true;
			hash: string;
			workOrder: { id: string; number: string; equipmentTag: string; status: string };
			/** Whether the record's content today hashes to what was printed. */
			matchesCurrent: boolean;
			currentHash: string;
			/** Events of the record after the newest print with this hash (what changed since). */
			changesSince: { seq: number; action: string; at: string; actorName: string }[];
			prints: {
				kind: string;
				printedAt: string;
				printedByName: string;
				chainSeq: number;
				/** The chain head the print names is still the event at that seq with that hash. */
				chainMatches: boolean;
			}[];
			/** The record's own events, each recomputed and linked to the one before it. */
			trail: Verification;
			released: { sha256: string; storedAt: string; recordHash: string } | null;
	  };

/**
 * What the verification page says of a printed hash (7/10): which record it belongs to (from the
 * prints noted when PDFs left the server), whether the record today still hashes the same,
 * whether the chain head printed with it is still in the trail unchanged, and whether the
 * record's events verify.
 */
export async function verifyRecordHash(hash: string): Promise<RecordVerification> {
	const prints = await db()
		.select()
		.from(recordPrints)
		.where(eq(recordPrints.recordHash, hash))
		.orderBy(asc(recordPrints.printedAt));
	if (!prints.length) return { found: false, hash };
	const workOrderId = prints[0]!.workOrderId;
	const s = (await loadState(db(), workOrderId))!;
	const currentHash = recordContentHash(s);
	const heads = [...new Set(prints.map((p) => p.chainSeq))];
	const stored = heads.length
		? await db()
				.select({ seq: auditEvent.seq, hash: sql<string>`encode(${auditEvent.hash}, 'hex')` })
				.from(auditEvent)
				.where(inArray(auditEvent.seq, heads))
		: [];
	const hashAt = new Map(stored.map((r) => [Number(r.seq), r.hash]));
	const lastPrint = Math.max(...prints.map((p) => p.chainSeq));
	const changes =
		currentHash === hash
			? []
			: await db()
					.select({
						seq: auditEvent.seq,
						action: auditEvent.action,
						at: auditEvent.at,
						actorName: auditEvent.actorName
					})
					.from(auditEvent)
					.where(
						and(
							eq(auditEvent.entityType, 'work_order'),
							eq(auditEvent.entityId, workOrderId),
							gt(auditEvent.seq, lastPrint)
						)
					)
					.orderBy(asc(auditEvent.seq))
					.limit(50);
	const released = await releasedRecordOf(db(), workOrderId);
	return {
		found: true,
		hash,
		workOrder: {
			id: workOrderId,
			number: s.wo.number,
			equipmentTag: s.wo.equipmentTag,
			status: s.status
		},
		matchesCurrent: currentHash === hash,
		currentHash,
		changesSince: changes.map((c) => ({ ...c, seq: Number(c.seq), at: c.at.toISOString() })),
		prints: prints.map((p) => ({
			kind: p.kind,
			printedAt: p.printedAt.toISOString(),
			printedByName: p.printedByName,
			chainSeq: p.chainSeq,
			chainMatches: hashAt.get(p.chainSeq) === p.chainHash
		})),
		trail: await verifyEntity(db().client, 'work_order', workOrderId),
		released: released
			? {
					sha256: released.sha256,
					storedAt: released.recordedAt.toISOString(),
					recordHash: released.recordHash
				}
			: null
	};
}
