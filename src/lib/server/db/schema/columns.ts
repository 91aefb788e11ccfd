import { bigint, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { accounts } from './accounts';

/**
 * The columns that tie a GMP record row to its audit event: who recorded it (id and printed
 * name at that moment), when (the database clock, from that event) and the event's seq
 * (`appendRecordEvent` in src/lib/server/records.ts returns them).
 */
export const recorded = () => ({
	recordedBy: uuid('recorded_by').references(() => accounts.id),
	recordedByName: text('recorded_by_name').notNull(),
	recordedAt: timestamp('recorded_at', { withTimezone: true, precision: 3 }).notNull(),
	auditSeq: bigint('audit_seq', { mode: 'number' }).notNull()
});
