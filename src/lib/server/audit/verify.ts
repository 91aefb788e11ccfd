import type { Sql } from 'postgres';
import { checkEvent, GENESIS, type StoredEvent } from './chain';

export type Verification = {
	ok: boolean;
	/** Events checked (up to and including the first bad one). */
	events: number;
	firstBadSeq: number | null;
	problem: string | null;
};

const columns = (sql: Sql) => sql`
	seq::int8 as seq, to_char(at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') as at, actor_kind, actor_id, actor_name, actor_roles, action, entity_type, entity_id,
	new_values, previous_values, reason, client_address,
	encode(prev_hash, 'hex') as prev_hash, encode(hash, 'hex') as hash`;

/**
 * Recomputes every hash of the trail from the stored columns (never from a stored copy of the
 * hashed bytes), in batches by seq with flat memory, and names the first event that fails and
 * why: a gap in seq, a broken link, or a hash mismatch. Also checks that the chain head agrees
 * with the last event (a deleted last event would otherwise go unseen). Takes a postgres.js
 * client, so that the app and the command line share it.
 */
export async function verifyChain(
	sql: Sql,
	{
		batchSize = 2000,
		onProgress
	}: { batchSize?: number; onProgress?: (checked: number, total: number) => void } = {}
): Promise<Verification> {
	const [{ total, headSeq, headHash }] = (await sql`
		select (select count(*) from audit_event)::int8 as "total",
		       seq::int8 as "headSeq", encode(hash, 'hex') as "headHash"
		from audit_chain_head where id = 1`) as unknown as [
		{ total: string; headSeq: string; headHash: string }
	];
	let expectedSeq = 1;
	let prev = GENESIS;
	let checked = 0;
	// The next batch is fetched while this one is hashed: the database and the CPU work at once.
	const fetchAfter = (seq: number) => {
		const pending = sql`select ${columns(sql)} from audit_event where seq > ${seq}
			order by seq limit ${batchSize}`.then((rows) => rows as unknown as StoredEvent[]);
		pending.catch(() => {}); // an abandoned prefetch (after a finding) must not crash the process
		return pending;
	};
	let next = fetchAfter(0);
	for (;;) {
		const rows = await next;
		const last = rows.at(-1);
		if (rows.length === batchSize && last) next = fetchAfter(Number(last.seq));
		for (const row of rows) {
			checked++;
			const problem = checkEvent(row, expectedSeq, prev);
			if (problem)
				return {
					ok: false,
					events: checked,
					firstBadSeq: problem.startsWith('gap') ? expectedSeq : Number(row.seq),
					problem
				};
			prev = row.hash;
			expectedSeq++;
		}
		onProgress?.(checked, Number(total));
		if (rows.length < batchSize) break;
	}
	if (Number(headSeq) !== expectedSeq - 1 || headHash !== prev) {
		return {
			ok: false,
			events: checked,
			firstBadSeq: expectedSeq,
			problem: `the chain head is at seq ${headSeq}, but the last event found is ${expectedSeq - 1}: events at the end are missing`
		};
	}
	return { ok: true, events: checked, firstBadSeq: null, problem: null };
}

/**
 * Verifies the events of one record: each event's own hash from its columns, and its link to
 * the event just before it in the chain (whatever record that one belongs to).
 */
export async function verifyEntity(
	sql: Sql,
	entityType: string,
	entityId: string
): Promise<Verification> {
	const rows = (await sql`select ${columns(sql)} from audit_event
		where entity_type = ${entityType} and entity_id = ${entityId} order by seq`) as unknown as StoredEvent[];
	let checked = 0;
	for (const row of rows) {
		checked++;
		const seq = Number(row.seq);
		const [before] =
			seq === 1
				? [{ hash: GENESIS }]
				: ((await sql`select encode(hash, 'hex') as hash from audit_event where seq = ${seq - 1}`) as unknown as {
						hash: string;
					}[]);
		if (!before)
			return {
				ok: false,
				events: checked,
				firstBadSeq: seq - 1,
				problem: `gap in seq: event ${seq - 1} is missing`
			};
		const problem = checkEvent(row, seq, before.hash);
		if (problem) return { ok: false, events: checked, firstBadSeq: seq, problem };
	}
	return { ok: true, events: checked, firstBadSeq: null, problem: null };
}
