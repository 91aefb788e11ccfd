import { sql } from 'drizzle-orm';
import { bigint, check, integer, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { sha256 } from './types';

/**
 * The audit trail: one append-only, hash-chained table of events (shared/DESIGN.md "Records,
 * audit trail, signatures"; README "The audit trail" lists the hashed fields). UPDATE, DELETE and
 * TRUNCATE are rejected by a trigger for every role, the owner included; the app role may only
 * INSERT and SELECT. `seq` is gapless: it comes from the chain head, taken under a row lock in the
 * same transaction as the event (src/lib/server/audit/index.ts).
 */
export const auditEvent = pgTable(
	'audit_event',
	{
		seq: bigint('seq', { mode: 'number' }).primaryKey(),
		/** The database clock when the event was appended, millisecond precision (exact in JavaScript). */
		at: timestamp('at', { withTimezone: true, precision: 3 }).notNull(),
		/** person · system · anonymous (a sign-in attempt nobody could be matched to) · token (a plant system's API token, 9/10) */
		actorKind: text('actor_kind').notNull(),
		actorId: text('actor_id'),
		/** The printed name at that time (an account's full name may change later). */
		actorName: text('actor_name').notNull(),
		actorRoles: text('actor_roles').array().notNull(),
		/** Lowercase dotted words: auth.sign_in, account.create, … */
		action: text('action').notNull(),
		entityType: text('entity_type').notNull(),
		entityId: text('entity_id'),
		newValues: jsonb('new_values'),
		previousValues: jsonb('previous_values'),
		reason: text('reason'),
		clientAddress: text('client_address'),
		prevHash: sha256('prev_hash').notNull(),
		hash: sha256('hash').notNull().unique()
	},
	(t) => [
		check('audit_event_action_form', sql`${t.action} ~ '^[a-z][a-z_]*(\\.[a-z][a-z_]*)+$'`),
		check(
			'audit_event_actor_kind',
			sql`${t.actorKind} in ('person', 'system', 'anonymous', 'token')`
		),
		check('audit_event_seq_positive', sql`${t.seq} > 0`),
		check(
			'audit_event_hash_length',
			sql`octet_length(${t.hash}) = 32 and octet_length(${t.prevHash}) = 32`
		)
	]
);

/** The one chain head: the last event's seq and hash. Locked (FOR UPDATE) by every append. */
export const auditChainHead = pgTable(
	'audit_chain_head',
	{
		id: integer('id').primaryKey(),
		seq: bigint('seq', { mode: 'number' }).notNull(),
		hash: sha256('hash').notNull()
	},
	(t) => [check('audit_chain_head_single', sql`${t.id} = 1`)]
);

/**
 * Checkpoints of the trail (8/10): the RFC 9162 Merkle tree head over the first `tree_size`
 * event hashes, kept at least every 1,000 events and at each release. An outsider holding two
 * checkpoints checks with a consistency proof that the later trail extends the earlier one, and
 * with an inclusion proof that an event is in it (scripts/verify-export.mjs). Append-only.
 */
export const auditCheckpoints = pgTable(
	'audit_checkpoints',
	{
		treeSize: bigint('tree_size', { mode: 'number' }).primaryKey(),
		rootHash: sha256('root_hash').notNull(),
		/** interval (every 1,000 events) or release (a released record's proof names it) */
		reason: text('reason').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true, precision: 3 }).notNull().defaultNow()
	},
	(t) => [
		check('audit_checkpoints_size', sql`${t.treeSize} > 0`),
		check('audit_checkpoints_reason', sql`${t.reason} in ('interval', 'release')`),
		check('audit_checkpoints_root', sql`octet_length(${t.rootHash}) = 32`)
	]
);
