import { sql } from 'drizzle-orm';
import { bigserial, check, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';

/**
 * The audit trail: one append-only table of events (UPDATE, DELETE and TRUNCATE are rejected by
 * a trigger for every role, the owner included). 3/10 adds the hash chain and a gapless seq.
 */
export const auditEvent = pgTable(
	'audit_event',
	{
		seq: bigserial('seq', { mode: 'number' }).primaryKey(),
		/** The database clock, millisecond precision (round-trips exactly through JavaScript). */
		at: timestamp('at', { withTimezone: true, precision: 3 })
			.notNull()
			.default(sql`now()`),
		/** person · system · anonymous (a sign-in attempt nobody could be matched to) */
		actorKind: text('actor_kind').notNull(),
		actorId: text('actor_id'),
		/** The printed name at that time (an account's full name may change later). */
		actorName: text('actor_name').notNull(),
		actorRoles: text('actor_roles')
			.array()
			.notNull()
			.default(sql`'{}'::text[]`),
		/** Lowercase dotted words: auth.sign_in, account.create, … */
		action: text('action').notNull(),
		entityType: text('entity_type').notNull(),
		entityId: text('entity_id'),
		newValues: jsonb('new_values'),
		previousValues: jsonb('previous_values'),
		reason: text('reason'),
		clientAddress: text('client_address')
	},
	(t) => [
		check('audit_event_action_form', sql`${t.action} ~ '^[a-z][a-z_]*(\\.[a-z][a-z_]*)+$'`),
		check('audit_event_actor_kind', sql`${t.actorKind} in ('person', 'system', 'anonymous')`)
	]
);
