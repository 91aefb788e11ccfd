import { sql } from 'drizzle-orm';
import {
	boolean,
	check,
	date,
	doublePrecision,
	index,
	integer,
	jsonb,
	pgTable,
	text,
	timestamp,
	unique,
	uuid
} from 'drizzle-orm/pg-core';
import type { ProcedureContent } from '../../../schemas/procedure';
import { accounts } from './accounts';
import { recorded } from './columns';
import { areas, sites } from './plant';
import { signatures } from './signatures';

/**
 * Plant master data (4/10): equipment, reference instruments, parts and lots, procedures and
 * qualifications. Every table is append-only (trigger countersign_append_only, migration 0006):
 * an identity row that never changes, and versions or events that are only ever added. The
 * current state is the newest version; the old ones stay visible. Each row names the audit
 * event that records it (`audit_seq`), who recorded it (id and printed name) and when
 * (database clock, from that event).
 */

// ── Equipment ────────────────────────────────────────────────────────────────

export const equipment = pgTable('equipment', {
	id: uuid('id').primaryKey(),
	siteId: uuid('site_id')
		.notNull()
		.references(() => sites.id),
	/** ISA-5.1 style tag; the identity of the equipment, never reassigned. */
	tag: text('tag').notNull().unique(),
	createdAt: timestamp('created_at', { withTimezone: true, precision: 3 }).notNull()
});

export const equipmentVersions = pgTable(
	'equipment_versions',
	{
		id: uuid('id').primaryKey(),
		equipmentId: uuid('equipment_id')
			.notNull()
			.references(() => equipment.id),
		version: integer('version').notNull(),
		areaId: uuid('area_id')
			.notNull()
			.references(() => areas.id),
		equipmentClass: text('equipment_class').notNull(),
		description: text('description').notNull(),
		gmpCritical: boolean('gmp_critical').notNull(),
		attributes: jsonb('attributes').$type<Record<string, unknown>>().notNull(),
		/** Null on the first version; every later version has the reason for its change. */
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('equipment_versions_number').on(t.equipmentId, t.version),
		check('equipment_versions_reason', sql`${t.version} = 1 or ${t.reason} is not null`)
	]
);

export const equipmentStatusChanges = pgTable(
	'equipment_status_changes',
	{
		id: uuid('id').primaryKey(),
		equipmentId: uuid('equipment_id')
			.notNull()
			.references(() => equipment.id),
		status: text('status').notNull(),
		reason: text('reason').notNull(),
		/** What caused it, e.g. a work order (5/10); null for a change made by hand. */
		sourceType: text('source_type'),
		sourceId: text('source_id'),
		...recorded()
	},
	(t) => [
		index('equipment_status_changes_equipment').on(t.equipmentId, t.auditSeq),
		check(
			'equipment_status_known',
			sql`${t.status} in ('in_service', 'out_of_service', 'awaiting_release', 'quarantined')`
		)
	]
);

export const equipmentUsage = pgTable(
	'equipment_usage',
	{
		id: uuid('id').primaryKey(),
		equipmentId: uuid('equipment_id')
			.notNull()
			.references(() => equipment.id),
		kind: text('kind').notNull(),
		/** How many cycles or hours this record adds to the counter. */
		amount: doublePrecision('amount').notNull(),
		occurredAt: timestamp('occurred_at', { withTimezone: true, precision: 3 }).notNull(),
		note: text('note').notNull(),
		...recorded()
	},
	(t) => [
		index('equipment_usage_equipment').on(t.equipmentId),
		check('equipment_usage_kind', sql`${t.kind} in ('sip_cycles', 'operating_hours')`),
		check('equipment_usage_amount', sql`${t.amount} > 0`)
	]
);

// ── Reference instruments ───────────────────────────────────────────────────

export const instruments = pgTable('instruments', {
	id: uuid('id').primaryKey(),
	siteId: uuid('site_id')
		.notNull()
		.references(() => sites.id),
	code: text('code').notNull().unique(),
	createdAt: timestamp('created_at', { withTimezone: true, precision: 3 }).notNull()
});

export const instrumentVersions = pgTable(
	'instrument_versions',
	{
		id: uuid('id').primaryKey(),
		instrumentId: uuid('instrument_id')
			.notNull()
			.references(() => instruments.id),
		version: integer('version').notNull(),
		kind: text('kind').notNull(),
		description: text('description').notNull(),
		rangeMin: doublePrecision('range_min').notNull(),
		rangeMax: doublePrecision('range_max').notNull(),
		unit: text('unit').notNull(),
		/** Expanded uncertainty (k = 2, about 95 %), in the instrument's unit. */
		uncertaintyU95: doublePrecision('uncertainty_u95').notNull(),
		/** Withdrawn from use: it can no longer be selected, whatever its calibration. */
		retired: boolean('retired').notNull(),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('instrument_versions_number').on(t.instrumentId, t.version),
		check('instrument_versions_reason', sql`${t.version} = 1 or ${t.reason} is not null`),
		check('instrument_versions_range', sql`${t.rangeMin} < ${t.rangeMax}`),
		check('instrument_versions_u95', sql`${t.uncertaintyU95} > 0`)
	]
);

export const calibrations = pgTable(
	'calibrations',
	{
		id: uuid('id').primaryKey(),
		instrumentId: uuid('instrument_id')
			.notNull()
			.references(() => instruments.id),
		performedOn: date('performed_on').notNull(),
		dueOn: date('due_on').notNull(),
		certificate: text('certificate').notNull(),
		/** As found: within tolerance, or out of tolerance (which may call for an impact assessment). */
		asFound: text('as_found').notNull(),
		/** As left: passed (fit for use until the due date) or failed. */
		asLeft: text('as_left').notNull(),
		note: text('note').notNull(),
		...recorded()
	},
	(t) => [
		index('calibrations_instrument').on(t.instrumentId),
		check('calibrations_dates', sql`${t.performedOn} <= ${t.dueOn}`),
		check('calibrations_as_found', sql`${t.asFound} in ('within', 'out_of_tolerance')`),
		check('calibrations_as_left', sql`${t.asLeft} in ('pass', 'fail')`)
	]
);

// ── Parts and lots ───────────────────────────────────────────────────────────

export const parts = pgTable('parts', {
	id: uuid('id').primaryKey(),
	siteId: uuid('site_id')
		.notNull()
		.references(() => sites.id),
	partNumber: text('part_number').notNull().unique(),
	createdAt: timestamp('created_at', { withTimezone: true, precision: 3 }).notNull()
});

export const partVersions = pgTable(
	'part_versions',
	{
		id: uuid('id').primaryKey(),
		partId: uuid('part_id')
			.notNull()
			.references(() => parts.id),
		version: integer('version').notNull(),
		description: text('description').notNull(),
		materialCode: text('material_code').notNull(),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('part_versions_number').on(t.partId, t.version),
		check('part_versions_reason', sql`${t.version} = 1 or ${t.reason} is not null`)
	]
);

export const partLots = pgTable(
	'part_lots',
	{
		id: uuid('id').primaryKey(),
		partId: uuid('part_id')
			.notNull()
			.references(() => parts.id),
		supplierLot: text('supplier_lot').notNull(),
		receivedOn: date('received_on').notNull(),
		expiresOn: date('expires_on'),
		quantityReceived: integer('quantity_received').notNull(),
		...recorded()
	},
	(t) => [
		unique('part_lots_lot').on(t.partId, t.supplierLot),
		check('part_lots_quantity', sql`${t.quantityReceived} > 0`)
	]
);

// ── Procedures ───────────────────────────────────────────────────────────────

export const procedures = pgTable('procedures', {
	id: uuid('id').primaryKey(),
	siteId: uuid('site_id')
		.notNull()
		.references(() => sites.id),
	code: text('code').notNull().unique(),
	createdAt: timestamp('created_at', { withTimezone: true, precision: 3 }).notNull()
});

/** A version: Draft until approved; Approved (effective) until a later version is approved; then Superseded. */
export const procedureVersions = pgTable(
	'procedure_versions',
	{
		id: uuid('id').primaryKey(),
		procedureId: uuid('procedure_id')
			.notNull()
			.references(() => procedures.id),
		version: integer('version').notNull(),
		/** Why this version was started (null for version 1). */
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('procedure_versions_number').on(t.procedureId, t.version),
		check('procedure_versions_reason', sql`${t.version} = 1 or ${t.reason} is not null`)
	]
);

/** Each save of a draft is a revision; the newest is the draft's content. None after approval (trigger). */
export const procedureRevisions = pgTable(
	'procedure_revisions',
	{
		id: uuid('id').primaryKey(),
		versionId: uuid('version_id')
			.notNull()
			.references(() => procedureVersions.id),
		revision: integer('revision').notNull(),
		content: jsonb('content').$type<ProcedureContent>().notNull(),
		...recorded()
	},
	(t) => [unique('procedure_revisions_number').on(t.versionId, t.revision)]
);

/** The approval of a version: its revision, the Approved signature; approver ≠ any author (trigger). */
export const procedureApprovals = pgTable('procedure_approvals', {
	id: uuid('id').primaryKey(),
	versionId: uuid('version_id')
		.notNull()
		.unique()
		.references(() => procedureVersions.id),
	revision: integer('revision').notNull(),
	signatureId: uuid('signature_id')
		.notNull()
		.unique()
		.references(() => signatures.id),
	...recorded()
});

// ── Qualifications ───────────────────────────────────────────────────────────

export const qualifications = pgTable(
	'qualifications',
	{
		id: uuid('id').primaryKey(),
		accountId: uuid('account_id')
			.notNull()
			.references(() => accounts.id),
		procedureId: uuid('procedure_id')
			.notNull()
			.references(() => procedures.id),
		trainedOn: date('trained_on').notNull(),
		expiresOn: date('expires_on').notNull(),
		trainer: text('trainer').notNull(),
		note: text('note').notNull(),
		...recorded()
	},
	(t) => [
		index('qualifications_person').on(t.accountId, t.procedureId),
		check('qualifications_dates', sql`${t.trainedOn} <= ${t.expiresOn}`)
	]
);

/** A training record withdrawn (entered by mistake, or the person's competence is in doubt): it stops counting from `effective_on`. */
export const qualificationWithdrawals = pgTable('qualification_withdrawals', {
	id: uuid('id').primaryKey(),
	qualificationId: uuid('qualification_id')
		.notNull()
		.unique()
		.references(() => qualifications.id),
	effectiveOn: date('effective_on').notNull(),
	reason: text('reason').notNull(),
	...recorded()
});
