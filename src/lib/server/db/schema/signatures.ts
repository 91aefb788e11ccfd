import { sql } from 'drizzle-orm';
import { bigint, check, index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { sha256 } from './types';
import type { SignatureMeaning } from '../../../signature-meanings';
import { accounts } from './accounts';

/**
 * Electronic signatures (21 CFR 11.50, 11.70; EU GMP Annex 11 §14): who (id, printed name and
 * roles at that moment), what it means, when (database clock), and the SHA-256 of the signed
 * record's canonical content, which binds the signature to that record in that state. Append-only.
 */
export const signatures = pgTable(
	'signatures',
	{
		id: uuid('id').primaryKey(),
		recordType: text('record_type').notNull(),
		recordId: text('record_id').notNull(),
		meaning: text('meaning').$type<SignatureMeaning>().notNull(),
		signerId: uuid('signer_id')
			.notNull()
			.references(() => accounts.id),
		signerName: text('signer_name').notNull(),
		signerRoles: text('signer_roles').array().notNull(),
		signedAt: timestamp('signed_at', { withTimezone: true, precision: 3 }).notNull(),
		contentHash: sha256('content_hash').notNull(),
		/** The audit event that records this signature. */
		auditSeq: bigint('audit_seq', { mode: 'number' }).notNull().unique()
	},
	(t) => [
		index('signatures_record').on(t.recordType, t.recordId),
		check(
			'signatures_meaning_known',
			sql`${t.meaning} in ('performed', 'verified', 'executed', 'approved', 'reviewed', 'released', 'returned')`
		),
		check('signatures_hash_length', sql`octet_length(${t.contentHash}) = 32`)
	]
);
