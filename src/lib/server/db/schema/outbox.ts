import { sql } from 'drizzle-orm';
import {
	bigint,
	check,
	index,
	integer,
	jsonb,
	pgTable,
	text,
	timestamp,
	uuid
} from 'drizzle-orm/pg-core';

/**
 * The outbox (7/10): work to do after a transaction commits — an e-mail to send, the released
 * record to render and store. A row is written in the same transaction as the event that causes
 * it, so it exists exactly when the event does; a worker takes due rows (FOR UPDATE SKIP LOCKED,
 * so two servers never take the same row), does the work, and marks the row done — or counts the
 * attempt, keeps the error and tries again later with back-off. Rows are never deleted; only the
 * delivery columns change (migration 0015 grants exactly those).
 */
export const outbox = pgTable(
	'outbox',
	{
		id: uuid('id').primaryKey(),
		kind: text('kind').notNull(),
		payload: jsonb('payload').notNull(),
		/** The audit event that caused it, where there is one. */
		causeSeq: bigint('cause_seq', { mode: 'number' }),
		createdAt: timestamp('created_at', { withTimezone: true, precision: 3 }).notNull().defaultNow(),
		attempts: integer('attempts').notNull().default(0),
		nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true, precision: 3 })
			.notNull()
			.defaultNow(),
		lastError: text('last_error'),
		doneAt: timestamp('done_at', { withTimezone: true, precision: 3 })
	},
	(t) => [
		index('outbox_due')
			.on(t.nextAttemptAt)
			.where(sql`${t.doneAt} is null`),
		check('outbox_kind', sql`${t.kind} in ('mail', 'released_record')`)
	]
);
