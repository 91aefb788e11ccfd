import { desc, eq } from 'drizzle-orm';
import {
	consistencyProof,
	inclusionProof,
	leafHash,
	treeHash
} from '../../../../scripts/verify-export.mjs';
import { db } from '../db/index';
import { auditCheckpoints } from '../db/schema/index';
import { log } from '../log';

/**
 * Checkpoints of the audit trail (8/10): RFC 9162 Merkle tree heads over the event hashes, with
 * the inclusion and consistency proofs an outsider checks with scripts/verify-export.mjs (the
 * same code computes and checks them). Leaf i is SHA-256(0x00 ‖ hash of event i + 1).
 */

export const CHECKPOINT_EVERY = 1000;

const hex = (b: Uint8Array) => Buffer.from(b).toString('hex');

/** The leaf hashes of the first `size` events, in seq order (32 bytes each: 3.2 MB per 100,000). */
async function leavesUpTo(size: number): Promise<Uint8Array[]> {
	const rows = await db().client<{ hash: Buffer }[]>`
		select hash from audit_event where seq <= ${size} order by seq`;
	if (rows.length !== size) throw new Error(`the trail holds ${rows.length} of ${size} events`);
	return rows.map((r) => leafHash(new Uint8Array(r.hash)));
}

async function headSeq() {
	const [row] = await db().client<{ seq: string }[]>`select seq from audit_chain_head where id = 1`;
	return Number(row?.seq ?? 0);
}

export type Checkpoint = { treeSize: number; rootHash: string; reason: string; createdAt: string };

/** Keeps the checkpoint of the first `size` events (once: a second call, or another server's, finds it). */
async function keep(size: number, root: Uint8Array, reason: 'interval' | 'release') {
	await db()
		.insert(auditCheckpoints)
		.values({ treeSize: size, rootHash: hex(root), reason })
		.onConflictDoNothing();
	const [row] = await db()
		.select()
		.from(auditCheckpoints)
		.where(eq(auditCheckpoints.treeSize, size));
	if (row!.rootHash !== hex(root))
		throw new Error(`the checkpoint of ${size} events holds another root: the trail has changed`);
	return { ...row!, createdAt: row!.createdAt.toISOString() };
}

/** A checkpoint of the whole trail as it is now (a release names it). */
export async function checkpointNow(reason: 'interval' | 'release' = 'release') {
	const size = await headSeq();
	return keep(size, treeHash(await leavesUpTo(size)), reason);
}

/** Every missing checkpoint at a multiple of 1,000 events up to the head (the worker runs it). */
export async function ensureIntervalCheckpoints() {
	const head = await headSeq();
	const [last] = await db()
		.select({ size: auditCheckpoints.treeSize })
		.from(auditCheckpoints)
		.where(eq(auditCheckpoints.reason, 'interval'))
		.orderBy(desc(auditCheckpoints.treeSize))
		.limit(1);
	const from = (last?.size ?? 0) + CHECKPOINT_EVERY;
	if (from > head) return [];
	const top = Math.floor(head / CHECKPOINT_EVERY) * CHECKPOINT_EVERY;
	const leaves = await leavesUpTo(top);
	const made: Checkpoint[] = [];
	for (let size = from; size <= top; size += CHECKPOINT_EVERY)
		made.push(await keep(size, treeHash(leaves, 0, size), 'interval'));
	return made;
}

export async function listCheckpoints(limit = 100) {
	const rows = await db()
		.select()
		.from(auditCheckpoints)
		.orderBy(desc(auditCheckpoints.treeSize))
		.limit(limit);
	return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() }));
}

export async function checkpointOf(size: number) {
	const [row] = await db()
		.select()
		.from(auditCheckpoints)
		.where(eq(auditCheckpoints.treeSize, size));
	return row ? { ...row, createdAt: row.createdAt.toISOString() } : null;
}

/** The JSON an outsider checks with `node scripts/verify-export.mjs --inclusion FILE`. */
export type InclusionProof = {
	kind: 'inclusion';
	seq: number;
	eventHash: string;
	treeSize: number;
	rootHash: string;
	path: string[];
};

/** The inclusion proof of event `seq` in the checkpoint of `treeSize` events (which must exist). */
export async function inclusionOf(seq: number, treeSize: number): Promise<InclusionProof | null> {
	const cp = await checkpointOf(treeSize);
	if (!cp || seq < 1 || seq > treeSize) return null;
	const [event] = await db().client<{ hash: Buffer }[]>`
		select hash from audit_event where seq = ${seq}`;
	const leaves = await leavesUpTo(treeSize);
	return {
		kind: 'inclusion',
		seq,
		eventHash: Buffer.from(event!.hash).toString('hex'),
		treeSize,
		rootHash: cp.rootHash,
		path: inclusionProof(leaves, seq - 1, treeSize).map(hex)
	};
}

/** The JSON an outsider checks with `node scripts/verify-export.mjs --consistency FILE`. */
export type ConsistencyProof = {
	kind: 'consistency';
	first: { treeSize: number; rootHash: string };
	second: { treeSize: number; rootHash: string };
	path: string[];
};

export async function consistencyOf(
	first: number,
	second: number
): Promise<ConsistencyProof | null> {
	const [a, b] = [await checkpointOf(first), await checkpointOf(second)];
	if (!a || !b || first > second) return null;
	const leaves = await leavesUpTo(second);
	return {
		kind: 'consistency',
		first: { treeSize: first, rootHash: a.rootHash },
		second: { treeSize: second, rootHash: b.rootHash },
		path: consistencyProof(leaves, first, second).map(hex)
	};
}

// ── In the server: the interval checkpoints follow the trail ─────────────────
let timer: ReturnType<typeof setInterval> | undefined;
let busy = false;

export function startCheckpointWorker(everyMs = 60_000) {
	if (timer) return;
	const tick = async () => {
		if (busy) return;
		busy = true;
		try {
			const made = await ensureIntervalCheckpoints();
			if (made.length)
				log.info('audit checkpoints kept', { treeSizes: made.map((c) => c.treeSize) });
		} catch (e) {
			log.error('audit checkpoints failed', { error: (e as Error).message });
		} finally {
			busy = false;
		}
	};
	timer = setInterval(tick, everyMs);
	timer.unref();
	void tick();
}

export function stopCheckpointWorker() {
	if (timer) clearInterval(timer);
	timer = undefined;
}
