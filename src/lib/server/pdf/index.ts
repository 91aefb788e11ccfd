import { desc, eq, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { checkpointNow, inclusionOf } from '../audit/checkpoints';
import { db, type Transaction } from '../db/index';
import { auditEvent, recordPrints, releasedRecords } from '../db/schema/index';
import { sha256Hex, thumbKey } from '../evidence';
import { appOrigin } from '../notify';
import { handleReleasedRecords } from '../outbox';
import { currentSite } from '../plant';
import { appendRecordEvent, isUniqueViolation, type Recorder } from '../records';
import { getBytes, putOnce } from '../storage';
import { getWorkOrder, recordContentHash } from '../work-orders';
import { renderRecordPdf } from './record';

/** Who a print is for: a signed-in person, or the system (the released original). */
type Printer = { id: string; name: string } | null;

export type PrintKind = 'working' | 'released' | 'copy';

/** The object key of a released record: content-addressed like the photos. */
export const releasedKey = (sha256: string) => `records/${sha256}.pdf`;

export async function releasedRecordOf(tx: Transaction, workOrderId: string) {
	const [row] = await tx
		.select()
		.from(releasedRecords)
		.where(eq(releasedRecords.workOrderId, workOrderId));
	return row ?? null;
}

/**
 * Renders one work order as it stands (7/10): its rows, the thumbnails of its photos (each
 * checked against its hash; one that does not match is left out and the record says so by its
 * hash), the latest audit event, and the address of the record's verification page. A print made
 * after the released original is stored is marked as a copy on every page.
 */
async function render(
	id: string,
	kind: PrintKind | 'auto',
	origin?: string,
	checkpointSize?: number
) {
	const found = await getWorkOrder(id);
	if (!found) return null;
	const site = (await currentSite())!;
	const released = found.released;
	const printKind: PrintKind = kind !== 'auto' ? kind : released ? 'copy' : 'working';
	// A released record proves its release event against a checkpoint: the one made for it, and
	// the same one again on every copy.
	const releaseSeq = found.transitions.findLast((t) => t.kind === 'released')?.auditSeq;
	const proofSize = checkpointSize ?? released?.checkpointSize ?? undefined;
	const inclusion =
		releaseSeq && proofSize ? ((await inclusionOf(releaseSeq, proofSize)) ?? undefined) : undefined;
	const thumbs = new Map<string, Uint8Array>();
	for (const p of found.photos) {
		const bytes = await getBytes(thumbKey(p.thumbSha256)).catch(() => null);
		if (bytes && sha256Hex(bytes) === p.thumbSha256) thumbs.set(p.id, bytes);
	}
	const [head] = await db()
		.select({ seq: auditEvent.seq, hash: sql<string>`encode(${auditEvent.hash}, 'hex')` })
		.from(auditEvent)
		.orderBy(desc(auditEvent.seq))
		.limit(1);
	const recordHash = recordContentHash(found);
	const chainHead = { seq: head?.seq ?? 0, hash: head?.hash ?? '' };
	const bytes = await renderRecordPdf(
		{ ...found, site },
		{
			generatedAt: new Date(),
			recordHash,
			chainHead,
			verifyUrl: `${(origin ?? appOrigin()).replace(/\/$/, '')}/verify?record=${recordHash}`,
			thumbs,
			copy: printKind === 'copy',
			inclusion
		}
	);
	return {
		bytes,
		number: found.wo.number,
		status: found.status,
		recordHash,
		chainHead,
		printKind,
		checkpointSize: inclusion?.treeSize ?? null
	};
}

/** A print for a person (GET …/record.pdf), noted in record_prints so the verification page can find it. */
export async function recordPdf(id: string, opts: { origin?: string; printedBy: Printer }) {
	const pdf = await render(id, 'auto', opts.origin);
	if (!pdf) return null;
	await db()
		.insert(recordPrints)
		.values(printRow(id, pdf, opts.printedBy));
	return pdf;
}

const printRow = (
	workOrderId: string,
	pdf: { recordHash: string; chainHead: { seq: number; hash: string }; printKind: PrintKind },
	by: Printer
) => ({
	id: randomUUID(),
	workOrderId,
	recordHash: pdf.recordHash,
	chainSeq: pdf.chainHead.seq,
	chainHash: pdf.chainHead.hash,
	kind: pdf.printKind,
	printedBy: by?.id ?? null,
	printedByName: by?.name ?? `system: ${ARCHIVE.name}`
});

const ARCHIVE: Recorder = { kind: 'system', name: 'record archive' };

/**
 * The outbox job of a release: renders the released record once, stores it in S3 under its
 * SHA-256, and in one transaction audits its hash and notes it (one per work order — the
 * database's unique key makes a retried or concurrent job a no-op).
 */
export async function storeReleasedRecord({ workOrderId }: { workOrderId: string }) {
	if (await releasedRecordOf(db(), workOrderId)) return;
	// A checkpoint of the trail as it stands, holding the release event (RFC 9162; 8/10).
	const checkpoint = await checkpointNow('release');
	const pdf = await render(workOrderId, 'released', undefined, checkpoint.treeSize);
	if (!pdf) throw new Error(`no work order ${workOrderId}`);
	if (pdf.status !== 'released') throw new Error(`${pdf.number} is not released`);
	const sha256 = sha256Hex(pdf.bytes);
	await putOnce(releasedKey(sha256), pdf.bytes, 'application/pdf');
	try {
		await db().transaction(async (tx) => {
			const rec = await appendRecordEvent(tx, ARCHIVE, {
				action: 'work_order.record_stored',
				entityType: 'work_order',
				entityId: workOrderId,
				newValues: {
					sha256,
					size: pdf.bytes.length,
					objectKey: releasedKey(sha256),
					recordHash: pdf.recordHash,
					chainSeq: pdf.chainHead.seq,
					checkpointSize: pdf.checkpointSize
				}
			});
			await tx.insert(releasedRecords).values({
				id: randomUUID(),
				workOrderId,
				sha256,
				size: pdf.bytes.length,
				recordHash: pdf.recordHash,
				chainSeq: pdf.chainHead.seq,
				checkpointSize: pdf.checkpointSize,
				...rec
			});
			await tx.insert(recordPrints).values(printRow(workOrderId, pdf, null));
		});
	} catch (e) {
		if (isUniqueViolation(e, 'released_records_work_order_id_unique')) return; // stored by another worker
		throw e;
	}
}
handleReleasedRecords(storeReleasedRecord);

/** The stored released original, its bytes checked against the hash on the way out. */
export async function releasedPdf(workOrderId: string) {
	const row = await releasedRecordOf(db(), workOrderId);
	if (!row) return null;
	const bytes = await getBytes(releasedKey(row.sha256));
	return { row, bytes, intact: bytes !== null && sha256Hex(bytes) === row.sha256 };
}
