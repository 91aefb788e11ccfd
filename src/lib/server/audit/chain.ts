import canonicalize from 'canonicalize';
import { createHash } from 'node:crypto';

/**
 * The audit chain's hashing, in one place (README "The audit trail" documents it for outsiders):
 *
 *   hash = SHA-256( prev_hash (32 raw bytes) ‖ UTF-8( RFC 8785 canonical JSON of the event's fields ) )
 *
 * with the fields below, named as the database columns and typed as JSON: `seq` a number, `at`
 * ISO 8601 UTC text with milliseconds and `Z`, `actor_roles` an array of strings, `new_values`
 * and `previous_values` objects or null, the other fields strings or null. The first event
 * chains from 32 zero bytes. Pure functions: the app, the verifier, the export and the
 * command-line tools share them.
 */
export const GENESIS = '00'.repeat(32);

export type ChainFields = {
	seq: number;
	at: string;
	actor_kind: string;
	actor_id: string | null;
	actor_name: string;
	actor_roles: string[];
	action: string;
	entity_type: string;
	entity_id: string | null;
	new_values: Record<string, unknown> | null;
	previous_values: Record<string, unknown> | null;
	reason: string | null;
	client_address: string | null;
};

export const HASHED_FIELDS = [
	'seq',
	'at',
	'actor_kind',
	'actor_id',
	'actor_name',
	'actor_roles',
	'action',
	'entity_type',
	'entity_id',
	'new_values',
	'previous_values',
	'reason',
	'client_address'
] as const satisfies readonly (keyof ChainFields)[];

/** The hashed fields in RFC 8785 order (UTF-16 code units of the names). */
const SORTED_FIELDS = [...HASHED_FIELDS].sort();

function member(value: unknown): string {
	if (value === null) return 'null';
	if (typeof value === 'string') {
		if (!value.isWellFormed()) throw new Error('event fields cannot be canonicalised');
		return JSON.stringify(value);
	}
	if (typeof value === 'number') {
		if (!Number.isFinite(value)) throw new Error('event fields cannot be canonicalised');
		return JSON.stringify(value);
	}
	const text = canonicalize(value);
	if (text === undefined) throw new Error('event fields cannot be canonicalised');
	return text;
}

/**
 * The RFC 8785 text that is hashed; throws on NaN, Infinity and lone surrogates. The top level
 * is a fixed set of names, written here in their sorted order (RFC 8785 §3.2.3) with each value
 * serialised as the canonicalize package does (strings and numbers as ECMAScript JSON, §3.2.2;
 * objects and arrays by canonicalize itself): the same text as canonicalize of the whole object
 * (tested in chain.spec.ts), without sorting thirteen names again for every event verified.
 */
export function canonicalText(fields: ChainFields): string {
	let text = '{';
	for (let i = 0; i < SORTED_FIELDS.length; i++) {
		const name = SORTED_FIELDS[i]!;
		text += (i ? ',"' : '"') + name + '":' + member(fields[name]);
	}
	return text + '}';
}

export function chainHash(prevHashHex: string, fields: ChainFields): string {
	if (!/^[0-9a-f]{64}$/.test(prevHashHex)) throw new Error('prev_hash must be 32 bytes of hex');
	return createHash('sha256')
		.update(Buffer.from(prevHashHex, 'hex'))
		.update(canonicalText(fields), 'utf8')
		.digest('hex');
}

/** A stored row (postgres.js, snake_case columns; `at` a Date, hashes hex) as the hashed fields. */
export type StoredEvent = Omit<ChainFields, 'at'> & {
	at: Date | string;
	prev_hash: string;
	hash: string;
};

const isoUtc = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/;

export function fieldsOf(row: StoredEvent): ChainFields {
	return {
		seq: Number(row.seq),
		// Verification selects `at` already as ISO 8601 UTC text (see verify.ts); other readers give a Date.
		at: typeof row.at === 'string' && isoUtc.test(row.at) ? row.at : new Date(row.at).toISOString(),
		actor_kind: row.actor_kind,
		actor_id: row.actor_id,
		actor_name: row.actor_name,
		actor_roles: row.actor_roles,
		action: row.action,
		entity_type: row.entity_type,
		entity_id: row.entity_id,
		new_values: row.new_values,
		previous_values: row.previous_values,
		reason: row.reason,
		client_address: row.client_address
	};
}

/** What was found wrong with an event, in words; null when it holds. */
export function checkEvent(
	row: StoredEvent,
	expectedSeq: number,
	expectedPrev: string
): string | null {
	const seq = Number(row.seq);
	if (seq !== expectedSeq) return `gap in seq: expected ${expectedSeq}, found ${seq}`;
	if (row.prev_hash !== expectedPrev)
		return `broken link: prev_hash does not match the hash of event ${expectedSeq - 1}`;
	let computed: string;
	try {
		computed = chainHash(row.prev_hash, fieldsOf(row));
	} catch (e) {
		return `fields cannot be hashed: ${(e as Error).message}`;
	}
	if (computed !== row.hash) return 'hash mismatch: the stored fields do not give the stored hash';
	return null;
}
