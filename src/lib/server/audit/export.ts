import type { Sql } from 'postgres';
import { fieldsOf, type StoredEvent } from './chain';

/**
 * The trail up to `lastSeq` as JSON Lines text, in batches (flat memory): each line one compact
 * JSON object with the hashed fields (same names and JSON types the hash uses) plus prev_hash
 * and hash in hex.
 */
export async function* exportLines(
	sql: Sql,
	lastSeq: number,
	batchSize = 2000
): AsyncGenerator<string> {
	let after = 0;
	while (after < lastSeq) {
		const rows =
			(await sql`select seq::int8 as seq, at, actor_kind, actor_id, actor_name, actor_roles, action,
				entity_type, entity_id, new_values, previous_values, reason, client_address,
				encode(prev_hash, 'hex') as prev_hash, encode(hash, 'hex') as hash
			from audit_event where seq > ${after} and seq <= ${lastSeq} order by seq limit ${batchSize}`) as unknown as StoredEvent[];
		if (rows.length === 0) return;
		let text = '';
		for (const row of rows)
			text += JSON.stringify({ ...fieldsOf(row), prev_hash: row.prev_hash, hash: row.hash }) + '\n';
		yield text;
		after = Number(rows.at(-1)!.seq);
	}
}
