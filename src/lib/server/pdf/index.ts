import { desc, sql } from 'drizzle-orm';
import { env } from '$env/dynamic/private';
import { db } from '../db/index';
import { auditEvent } from '../db/schema/index';
import { sha256Hex, thumbKey } from '../evidence';
import { currentSite } from '../plant';
import { getBytes } from '../storage';
import { getWorkOrder, recordContentHash } from '../work-orders';
import { renderRecordPdf } from './record';

/**
 * The PDF of one work order as it stands (7/10): its rows, the thumbnails of its photos (each
 * checked against its hash; one that does not match is left out and the record says so by its
 * hash), the latest audit event, and the address of the record's verification page.
 */
export async function recordPdf(id: string, opts: { copy?: boolean; origin?: string } = {}) {
	const found = await getWorkOrder(id);
	if (!found) return null;
	const site = (await currentSite())!;
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
	const origin = opts.origin ?? env.ORIGIN ?? 'http://127.0.0.1:3000';
	const bytes = await renderRecordPdf(
		{ ...found, site },
		{
			generatedAt: new Date(),
			recordHash,
			chainHead: { seq: head?.seq ?? 0, hash: head?.hash ?? '' },
			verifyUrl: `${origin}/verify?record=${recordHash}`,
			thumbs,
			copy: opts.copy ?? false
		}
	);
	return { bytes, number: found.wo.number, recordHash };
}
