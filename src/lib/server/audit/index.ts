import { sql } from 'drizzle-orm';
import type { Role } from '$lib/roles';
import type { Transaction } from '../db/index';
import { auditEvent } from '../db/schema/index';
import { chainHash, type ChainFields } from './chain';

/** Who did it: a person (with the printed name and roles at that moment), a system job, or nobody known. */
export type Actor =
	| { kind: 'person'; id: string; name: string; roles: readonly Role[] }
	| { kind: 'system'; name: string }
	| { kind: 'anonymous' }
	/** A plant system's API token (9/10): its id and its name. */
	| { kind: 'token'; id: string; name: string };

export type AuditInput = {
	actor: Actor;
	/** Lowercase dotted words, e.g. auth.sign_in, account.roles_change. */
	action: string;
	entityType: string;
	entityId?: string | null;
	newValues?: Record<string, unknown> | null;
	previousValues?: Record<string, unknown> | null;
	reason?: string | null;
	clientAddress?: string | null;
};

/** Text the trail cannot hold faithfully: NUL (PostgreSQL refuses it) or a lone UTF-16 surrogate. */
function unstorable(value: unknown): boolean {
	if (typeof value === 'string') return value.includes('\u0000') || !value.isWellFormed();
	if (Array.isArray(value)) return value.some(unstorable);
	if (value && typeof value === 'object')
		return Object.entries(value).some(([k, v]) => unstorable(k) || unstorable(v));
	if (typeof value === 'number') return !Number.isFinite(value);
	return false;
}

export class AuditInputError extends Error {}

/**
 * Appends one event to the hash-chained audit trail inside the caller's transaction: the chain
 * head is locked (FOR UPDATE) until that transaction ends, so concurrent writers queue in one
 * line, `seq` has no gaps, and a rolled-back transaction leaves no event. `at` is the database
 * clock once the lock is held, to the millisecond. Call it inside `db().transaction(...)`.
 */
export async function recordEvent(tx: Transaction, input: AuditInput) {
	const { actor } = input;
	if (unstorable(input))
		throw new AuditInputError(
			'the event holds text or numbers the audit trail cannot store exactly'
		);
	const [head] = (await tx.execute(
		sql`select seq, encode(hash, 'hex') as hash, date_trunc('milliseconds', clock_timestamp()) as now
			from audit_chain_head where id = 1 for update`
	)) as unknown as { seq: string | number; hash: string; now: Date }[];
	if (!head) throw new Error('the audit chain head is missing (migration 0004)');

	// JSON values are stored in jsonb and read back for verification: store exactly what was hashed.
	const json = (v: Record<string, unknown> | null | undefined) =>
		v == null ? null : JSON.parse(JSON.stringify(v));
	const fields: ChainFields = {
		seq: Number(head.seq) + 1,
		at: new Date(head.now).toISOString(),
		actor_kind: actor.kind,
		actor_id: actor.kind === 'person' || actor.kind === 'token' ? actor.id : null,
		actor_name: actor.kind === 'anonymous' ? 'unknown' : actor.name,
		actor_roles: actor.kind === 'person' ? [...actor.roles] : [],
		action: input.action,
		entity_type: input.entityType,
		entity_id: input.entityId ?? null,
		new_values: json(input.newValues),
		previous_values: json(input.previousValues),
		reason: input.reason ?? null,
		client_address: input.clientAddress ?? null
	};
	const hash = chainHash(head.hash, fields);
	// The event and the new head in one statement: one round trip less while the head is held.
	const jsonb = (v: Record<string, unknown> | null) =>
		v == null ? sql`null::jsonb` : sql`${JSON.stringify(v)}::jsonb`;
	const roles = fields.actor_roles.length
		? sql`array[${sql.join(
				fields.actor_roles.map((r) => sql`${r}`),
				sql`, `
			)}]::text[]`
		: sql`'{}'::text[]`;
	await tx.execute(sql`
		with appended as (
			insert into ${auditEvent} (seq, at, actor_kind, actor_id, actor_name, actor_roles, action, entity_type, entity_id,
				new_values, previous_values, reason, client_address, prev_hash, hash)
			values (${fields.seq}, ${fields.at}::timestamptz, ${fields.actor_kind}, ${fields.actor_id}, ${fields.actor_name}, ${roles},
				${fields.action}, ${fields.entity_type}, ${fields.entity_id}, ${jsonb(fields.new_values)}, ${jsonb(fields.previous_values)},
				${fields.reason}, ${fields.client_address}, decode(${head.hash}, 'hex'), decode(${hash}, 'hex'))
		)
		update audit_chain_head set seq = ${fields.seq}, hash = decode(${hash}, 'hex') where id = 1`);
	return { seq: fields.seq, at: fields.at, hash };
}
