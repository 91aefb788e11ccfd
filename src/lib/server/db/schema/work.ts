import { sql } from 'drizzle-orm';
import {
	bigint,
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
	uniqueIndex,
	uuid
} from 'drizzle-orm/pg-core';
import type { EntryValue } from '../../../work';
import { accounts } from './accounts';
import { recorded } from './columns';
import { equipment, instruments, partLots, procedureVersions } from './master';
import { sites } from './plant';
import { pmSchedules } from './pm';
import { signatures } from './signatures';

/**
 * Work orders (5/10). Append-only like every GMP record (triggers, migration 0011): the work
 * order's identity, versions of its plan, status transitions, the entries of each step, the
 * signoffs of each step, deviations and their dispositions. The current state follows from the
 * rows (src/lib/work.ts); nothing is updated. Each row names its audit event.
 */

export const workOrders = pgTable(
	'work_orders',
	{
		id: uuid('id').primaryKey(),
		siteId: uuid('site_id')
			.notNull()
			.references(() => sites.id),
		/** WO-<year>-<nnnn>, per site and year; never reused. */
		number: text('number').notNull().unique(),
		kind: text('kind').notNull(),
		equipmentId: uuid('equipment_id')
			.notNull()
			.references(() => equipment.id),
		/** The approved procedure version the work follows, pinned at creation (MR1). */
		procedureVersionId: uuid('procedure_version_id')
			.notNull()
			.references(() => procedureVersions.id),
		/** The work order this one follows up (for example the re-tightening after a diaphragm change). */
		followsUp: uuid('follows_up'),
		/** The PM schedule that made it (9/10), and what its due date counted from. */
		pmScheduleId: uuid('pm_schedule_id').references(() => pmSchedules.id),
		/**
		 * The schedule's basis for this work order: the id of the released work order it counts
		 * from (or "start"), and how many made on that basis were cancelled ("<basis>#<n>"). With the
		 * unique index below, however many scheduler runs there are, one work order per due date.
		 */
		pmBasis: text('pm_basis'),
		...recorded()
	},
	(t) => [
		index('work_orders_equipment').on(t.equipmentId),
		check('work_orders_kind', sql`${t.kind} in ('preventive', 'corrective', 'follow_up')`),
		check('work_orders_pm_basis', sql`(${t.pmScheduleId} is null) = (${t.pmBasis} is null)`),
		uniqueIndex('work_orders_pm_once')
			.on(t.pmScheduleId, t.equipmentId, t.pmBasis)
			.where(sql`${t.pmScheduleId} is not null`),
		// One follow-up per work order followed up (9/10 item 3), however many cycles are reported.
		uniqueIndex('work_orders_follow_up_once')
			.on(t.followsUp)
			.where(sql`${t.kind} = 'follow_up'`)
	]
);

export const workOrderPlans = pgTable(
	'work_order_plans',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		version: integer('version').notNull(),
		dueOn: date('due_on').notNull(),
		priority: text('priority').notNull(),
		assignees: uuid('assignees').array().notNull(),
		notes: text('notes').notNull(),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('work_order_plans_number').on(t.workOrderId, t.version),
		check('work_order_plans_reason', sql`${t.version} = 1 or ${t.reason} is not null`),
		check('work_order_plans_priority', sql`${t.priority} in ('routine', 'high', 'urgent')`)
	]
);

export const workOrderTransitions = pgTable(
	'work_order_transitions',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		kind: text('kind').notNull(),
		reason: text('reason'),
		signatureId: uuid('signature_id')
			.unique()
			.references(() => signatures.id),
		...recorded()
	},
	(t) => [
		index('work_order_transitions_order').on(t.workOrderId, t.auditSeq),
		check(
			'work_order_transitions_kind',
			sql`${t.kind} in ('planned', 'started', 'executed', 'trail_reviewed', 'released', 'returned', 'cancelled')`
		),
		check(
			'work_order_transitions_reason',
			sql`${t.kind} not in ('returned', 'cancelled') or ${t.reason} is not null`
		),
		check(
			'work_order_transitions_signed',
			sql`${t.kind} not in ('executed', 'trail_reviewed', 'released', 'returned') or ${t.signatureId} is not null`
		)
	]
);

/** One value of one field of one step; a correction is a new entry naming the one it corrects. */
export const stepEntries = pgTable(
	'step_entries',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		stepKey: text('step_key').notNull(),
		fieldKey: text('field_key').notNull(),
		value: jsonb('value').$type<EntryValue>().notNull(),
		withinLimits: boolean('within_limits'),
		/** The lot fitted (part-lot fields): traceability from a lot to the equipment. */
		lotId: uuid('lot_id').references(() => partLots.id),
		/** The instrument used (instrument fields) and its calibration due date on the day. */
		instrumentId: uuid('instrument_id').references(() => instruments.id),
		calibrationDueOn: date('calibration_due_on'),
		/** When the work was done (DI1); recorded_at is the database's time of the entry. */
		performedAt: timestamp('performed_at', { withTimezone: true, precision: 3 }).notNull(),
		lateReason: text('late_reason'),
		corrects: uuid('corrects').unique(),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		index('step_entries_order').on(t.workOrderId, t.auditSeq),
		index('step_entries_lot').on(t.lotId),
		index('step_entries_instrument').on(t.instrumentId),
		check('step_entries_correction_reason', sql`${t.corrects} is null or ${t.reason} is not null`)
	]
);

/** Performed and Verified (each with its signature), or Returned by the verifier with a reason. */
export const stepSignoffs = pgTable(
	'step_signoffs',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		stepKey: text('step_key').notNull(),
		kind: text('kind').notNull(),
		signatureId: uuid('signature_id')
			.unique()
			.references(() => signatures.id),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		index('step_signoffs_order').on(t.workOrderId, t.auditSeq),
		check('step_signoffs_kind', sql`${t.kind} in ('performed', 'verified', 'returned')`),
		check(
			'step_signoffs_complete',
			sql`(${t.kind} = 'returned' and ${t.reason} is not null) or (${t.kind} <> 'returned' and ${t.signatureId} is not null)`
		)
	]
);

/**
 * Guided tightening (6/10): each pass ticked on a tightening field, in order, with the database's
 * time, and each restart of the passes (pass 0 of a new round, with its reason). The step entry
 * of the field, saved after the last pass, lists these rows; nothing here is ever changed.
 */
export const tighteningPasses = pgTable(
	'tightening_passes',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		stepKey: text('step_key').notNull(),
		fieldKey: text('field_key').notNull(),
		round: integer('round').notNull(),
		pass: integer('pass').notNull(),
		/** The pass's name and target as shown when it was ticked (torque in the equipment's unit). */
		name: text('name').notNull(),
		targetTorque: doublePrecision('target_torque'),
		unit: text('unit').notNull(),
		reason: text('reason'),
		...recorded()
	},
	(t) => [
		unique('tightening_passes_once').on(t.workOrderId, t.stepKey, t.fieldKey, t.round, t.pass),
		check('tightening_passes_numbers', sql`${t.round} >= 1 and ${t.pass} >= 0`),
		check('tightening_passes_restart_reason', sql`(${t.pass} = 0) = (${t.reason} is not null)`)
	]
);

/**
 * Photo evidence (7/10): the original bytes are stored unchanged in the object store under their
 * SHA-256, a thumbnail beside them. The row says what was checked (type by magic bytes, size,
 * dimensions) and where it belongs: a photo field of a step (its entry names this row), the step
 * itself, or a deviation. Never deleted: a photo attached by mistake is voided with a reason.
 */
export const evidence = pgTable(
	'evidence',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		stepKey: text('step_key'),
		fieldKey: text('field_key'),
		deviationId: uuid('deviation_id').references(() => deviations.id),
		sha256: text('sha256').notNull(),
		size: integer('size').notNull(),
		mediaType: text('media_type').notNull(),
		width: integer('width').notNull(),
		height: integer('height').notNull(),
		thumbSha256: text('thumb_sha256').notNull(),
		note: text('note'),
		...recorded()
	},
	(t) => [
		index('evidence_work_order').on(t.workOrderId, t.auditSeq),
		check(
			'evidence_sha256',
			sql`${t.sha256} ~ '^[0-9a-f]{64}$' and ${t.thumbSha256} ~ '^[0-9a-f]{64}$'`
		),
		check('evidence_size', sql`${t.size} > 0 and ${t.width} > 0 and ${t.height} > 0`),
		check('evidence_type', sql`${t.mediaType} in ('image/jpeg', 'image/png', 'image/webp')`),
		check('evidence_place', sql`${t.stepKey} is not null or ${t.deviationId} is not null`)
	]
);

/** A photo voided (attached by mistake), with the reason: it stays visible, marked voided. */
export const evidenceVoids = pgTable('evidence_voids', {
	id: uuid('id').primaryKey(),
	evidenceId: uuid('evidence_id')
		.notNull()
		.unique()
		.references(() => evidence.id),
	reason: text('reason').notNull(),
	...recorded()
});

export const deviations = pgTable(
	'deviations',
	{
		id: uuid('id').primaryKey(),
		/** DEV-<year>-<nnnn>, per site and year. */
		number: text('number').notNull().unique(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		stepKey: text('step_key').notNull(),
		fieldKey: text('field_key').notNull(),
		entryId: uuid('entry_id')
			.notNull()
			.unique()
			.references(() => stepEntries.id),
		description: text('description').notNull(),
		...recorded()
	},
	(t) => [index('deviations_work_order').on(t.workOrderId)]
);

export const deviationDispositions = pgTable(
	'deviation_dispositions',
	{
		id: uuid('id').primaryKey(),
		deviationId: uuid('deviation_id')
			.notNull()
			.unique()
			.references(() => deviations.id),
		decision: text('decision').notNull(),
		text: text('text').notNull(),
		signatureId: uuid('signature_id')
			.notNull()
			.unique()
			.references(() => signatures.id),
		...recorded()
	},
	(t) => [
		check(
			'deviation_dispositions_decision',
			sql`${t.decision} in ('accepted', 'corrected', 'capa')`
		)
	]
);

/**
 * The released maintenance record (7/10): the PDF rendered once after the release commits (from
 * the outbox), stored in S3 under its SHA-256, its hash audited. One per work order; later prints
 * are copies.
 */
export const releasedRecords = pgTable(
	'released_records',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.unique()
			.references(() => workOrders.id),
		sha256: text('sha256').notNull(),
		size: integer('size').notNull(),
		/** The record's content hash printed in it, and the chain head it names. */
		recordHash: text('record_hash').notNull(),
		chainSeq: bigint('chain_seq', { mode: 'number' }).notNull(),
		/** The checkpoint the PDF proves the release event against (8/10; migration 0016). */
		checkpointSize: bigint('checkpoint_size', { mode: 'number' }),
		...recorded()
	},
	(t) => [
		check(
			'released_records_hashes',
			sql`${t.sha256} ~ '^[0-9a-f]{64}$' and ${t.recordHash} ~ '^[0-9a-f]{64}$'`
		),
		check('released_records_size', sql`${t.size} > 0`)
	]
);

/**
 * Every PDF of a record that left the server (7/10): which record content (hash) it carried and
 * the chain head it named, so that the verification page can find the record from the hash or
 * QR code on paper. Append-only; not part of the audit chain (printing changes no record).
 */
export const recordPrints = pgTable(
	'record_prints',
	{
		id: uuid('id').primaryKey(),
		workOrderId: uuid('work_order_id')
			.notNull()
			.references(() => workOrders.id),
		recordHash: text('record_hash').notNull(),
		chainSeq: bigint('chain_seq', { mode: 'number' }).notNull(),
		chainHash: text('chain_hash').notNull(),
		/** 'working' (before release), 'released' (the stored original) or 'copy' (after it). */
		kind: text('kind').notNull(),
		printedBy: uuid('printed_by').references(() => accounts.id),
		printedByName: text('printed_by_name').notNull(),
		printedAt: timestamp('printed_at', { withTimezone: true, precision: 3 }).notNull().defaultNow()
	},
	(t) => [
		index('record_prints_hash').on(t.recordHash),
		check('record_prints_kind', sql`${t.kind} in ('working', 'released', 'copy')`)
	]
);
