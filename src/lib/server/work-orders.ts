import { and, asc, desc, eq, inArray, like, or, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { equipmentStatusLabels, type EquipmentStatus } from '$lib/equipment';
import { evaluate, formulas } from '$lib/calc/formulas';
import { passesFor } from '$lib/calc/tightening';
import { quantityOf } from '$lib/calc/units';
import { addDays, siteToday } from '$lib/fitness';
import {
	cleanContent,
	limitsText,
	type ProcedureContent,
	type ProcedureField
} from '$lib/schemas/procedure';
import type { SignatureMeaning } from '$lib/signature-meanings';
import {
	bandOf,
	currentEntries,
	deviationSignedContent,
	enterable,
	parseNumber,
	passProgress,
	sameValue,
	turOf,
	LATE_ENTRY_MINUTES,
	parseEntry,
	statusOf,
	stepDone,
	stepSignedContent,
	stepStatus,
	trailSignedContent,
	valueText,
	withinLimits,
	workOrderSignedContent,
	workStatusLabels,
	type DeviationDecision,
	type EntryRow,
	type EntryValue,
	type EvidenceRow,
	type PassRow,
	type StepStatus,
	type Priority,
	type SignoffRow,
	type TransitionKind,
	type WorkKind,
	type WorkOrderIdentity,
	type WorkStatus
} from '$lib/work';
import { isStorableText, unstorableTextMessage } from '$lib/schemas/text';
import { recordEventNow } from './audit/now';
import type { User } from './auth/guard';
import { db, type Transaction } from './db/index';
import {
	accounts,
	auditEvent,
	deviationDispositions,
	deviations,
	sipDeviations,
	equipment,
	equipmentStatusChanges,
	equipmentVersions,
	partLots,
	parts,
	partVersions,
	procedureApprovals,
	procedureRevisions,
	procedures,
	procedureVersions,
	signatures,
	evidence,
	evidenceVoids,
	stepEntries,
	tighteningPasses,
	stepSignoffs,
	workOrderPlans,
	workOrders,
	workOrderTransitions,
	releasedRecords
} from './db/schema/index';
import { lockEquipment, setStatus } from './equipment';
import {
	notifyDeviation,
	notifyReleaseWaiting,
	notifyReturned,
	notifyVerificationWaiting,
	type WorkRef
} from './notify';
import { enqueue, kickOutbox } from './outbox';
import { instrumentFitness, getInstrument } from './instruments';
import { effectiveVersion } from './procedures';
import { isQualified } from './qualifications';
import {
	appendRecordEvent,
	mustHold,
	needReason,
	personOf,
	RecordError,
	refuse,
	siteOrFail,
	type Recorder
} from './records';
import {
	contentHash,
	reauthenticate,
	recordSignature,
	signaturesOf,
	type SignedRecord
} from './signatures/index';

/**
 * Work orders from plan to release (5/10; DESIGN "Things and their life"; REQUIREMENTS ES1–ES8,
 * AT5, DI1–DI4, MR1, MR4, SE11). Every write takes the work order's lock first, checks the
 * expected version the person saw (`seen`: the rows they were shown), then writes its rows and
 * their audit events in one transaction. Signatures re-authenticate before the transaction opens
 * (3/10) and are recorded inside it. The rules that decide state live in src/lib/work.ts.
 */

export async function lockWorkOrder(tx: Transaction, id: string) {
	await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${'work_order:' + id}, 0))`);
}

const iso = (d: Date) => d.toISOString();

/** What a notification names of a work order. */
const workRef = (s: WorkOrderState): WorkRef => ({
	id: s.wo.id,
	number: s.wo.number,
	equipmentTag: s.wo.equipmentTag,
	procedureId: s.wo.procedureId,
	procedureCode: s.wo.procedureCode
});

/** Runs a transaction that may write outbox rows, then has the worker take them. */
async function thenKick<T>(work: Promise<T>): Promise<T> {
	const out = await work;
	kickOutbox();
	return out;
}

// ── Reading ──────────────────────────────────────────────────────────────────

/** Every row of one work order, read in the given transaction (under its lock when writing). */
export async function loadState(tx: Transaction, id: string) {
	const [wo] = await tx
		.select({
			id: workOrders.id,
			siteId: workOrders.siteId,
			number: workOrders.number,
			kind: workOrders.kind,
			equipmentId: workOrders.equipmentId,
			equipmentTag: equipment.tag,
			procedureVersionId: workOrders.procedureVersionId,
			procedureId: procedureVersions.procedureId,
			procedureVersion: procedureVersions.version,
			procedureCode: procedures.code,
			followsUp: workOrders.followsUp,
			createdBy: workOrders.recordedByName,
			createdAt: workOrders.recordedAt
		})
		.from(workOrders)
		.innerJoin(equipment, eq(equipment.id, workOrders.equipmentId))
		.innerJoin(procedureVersions, eq(procedureVersions.id, workOrders.procedureVersionId))
		.innerJoin(procedures, eq(procedures.id, procedureVersions.procedureId))
		.where(eq(workOrders.id, id));
	if (!wo) return undefined;
	const [approval] = await tx
		.select({ revision: procedureApprovals.revision })
		.from(procedureApprovals)
		.where(eq(procedureApprovals.versionId, wo.procedureVersionId));
	const [revision] = await tx
		.select({ content: procedureRevisions.content })
		.from(procedureRevisions)
		.where(
			and(
				eq(procedureRevisions.versionId, wo.procedureVersionId),
				eq(procedureRevisions.revision, approval!.revision)
			)
		);
	const content = cleanContent(revision!.content as ProcedureContent);
	const plans = await tx
		.select()
		.from(workOrderPlans)
		.where(eq(workOrderPlans.workOrderId, id))
		.orderBy(desc(workOrderPlans.version));
	const transitions = await tx
		.select()
		.from(workOrderTransitions)
		.where(eq(workOrderTransitions.workOrderId, id))
		.orderBy(asc(workOrderTransitions.auditSeq));
	const entryRows = await tx
		.select()
		.from(stepEntries)
		.where(eq(stepEntries.workOrderId, id))
		.orderBy(asc(stepEntries.auditSeq));
	const signoffRows = await tx
		.select()
		.from(stepSignoffs)
		.where(eq(stepSignoffs.workOrderId, id))
		.orderBy(asc(stepSignoffs.auditSeq));
	const passRows = await tx
		.select()
		.from(tighteningPasses)
		.where(eq(tighteningPasses.workOrderId, id))
		.orderBy(asc(tighteningPasses.auditSeq));
	const evidenceRows = await tx
		.select({
			id: evidence.id,
			stepKey: evidence.stepKey,
			fieldKey: evidence.fieldKey,
			deviationId: evidence.deviationId,
			sha256: evidence.sha256,
			size: evidence.size,
			mediaType: evidence.mediaType,
			width: evidence.width,
			height: evidence.height,
			thumbSha256: evidence.thumbSha256,
			note: evidence.note,
			recordedBy: evidence.recordedBy,
			recordedByName: evidence.recordedByName,
			recordedAt: evidence.recordedAt,
			auditSeq: evidence.auditSeq,
			voidId: evidenceVoids.id,
			voidReason: evidenceVoids.reason,
			voidedByName: evidenceVoids.recordedByName,
			voidedAt: evidenceVoids.recordedAt
		})
		.from(evidence)
		.leftJoin(evidenceVoids, eq(evidenceVoids.evidenceId, evidence.id))
		.where(eq(evidence.workOrderId, id))
		.orderBy(asc(evidence.auditSeq));
	const photos: EvidenceRow[] = evidenceRows.map((e) => ({
		...e,
		recordedAt: iso(e.recordedAt),
		voidedAt: e.voidedAt ? iso(e.voidedAt) : null
	}));
	// The equipment's data as registered now: fasteners, torque and compression band (manufacturer's figures).
	const [equipmentData] = await tx
		.select({
			description: equipmentVersions.description,
			equipmentClass: equipmentVersions.equipmentClass,
			attributes: equipmentVersions.attributes
		})
		.from(equipmentVersions)
		.where(eq(equipmentVersions.equipmentId, wo.equipmentId))
		.orderBy(desc(equipmentVersions.version))
		.limit(1);
	const deviationRows = await tx
		.select({
			id: deviations.id,
			number: deviations.number,
			stepKey: deviations.stepKey,
			fieldKey: deviations.fieldKey,
			entryId: deviations.entryId,
			description: deviations.description,
			raisedBy: deviations.recordedByName,
			raisedAt: deviations.recordedAt,
			auditSeq: deviations.auditSeq,
			dispositionId: deviationDispositions.id,
			decision: deviationDispositions.decision,
			dispositionText: deviationDispositions.text,
			dispositionSignatureId: deviationDispositions.signatureId,
			dispositionedBy: deviationDispositions.recordedByName,
			dispositionedById: deviationDispositions.recordedBy,
			dispositionedAt: deviationDispositions.recordedAt,
			dispositionSeq: deviationDispositions.auditSeq
		})
		.from(deviations)
		.leftJoin(deviationDispositions, eq(deviationDispositions.deviationId, deviations.id))
		.where(eq(deviations.workOrderId, id))
		.orderBy(asc(deviations.auditSeq));
	const entries: EntryRow[] = entryRows.map((e) => ({
		id: e.id,
		stepKey: e.stepKey,
		fieldKey: e.fieldKey,
		value: e.value,
		withinLimits: e.withinLimits,
		performedAt: iso(e.performedAt),
		lateReason: e.lateReason,
		corrects: e.corrects,
		reason: e.reason,
		recordedBy: e.recordedBy,
		recordedByName: e.recordedByName,
		recordedAt: iso(e.recordedAt),
		auditSeq: e.auditSeq
	}));
	const signoffs: SignoffRow[] = signoffRows.map((s) => ({
		id: s.id,
		stepKey: s.stepKey,
		kind: s.kind as SignoffRow['kind'],
		signatureId: s.signatureId,
		reason: s.reason,
		recordedBy: s.recordedBy,
		recordedByName: s.recordedByName,
		recordedAt: iso(s.recordedAt),
		auditSeq: s.auditSeq
	}));
	const passes: PassRow[] = passRows.map((p) => ({
		id: p.id,
		stepKey: p.stepKey,
		fieldKey: p.fieldKey,
		round: p.round,
		pass: p.pass,
		name: p.name,
		targetTorque: p.targetTorque,
		unit: p.unit,
		reason: p.reason,
		recordedBy: p.recordedBy,
		recordedByName: p.recordedByName,
		recordedAt: iso(p.recordedAt),
		auditSeq: p.auditSeq
	}));
	const identity: WorkOrderIdentity = {
		id: wo.id,
		number: wo.number,
		equipmentTag: wo.equipmentTag,
		procedureCode: wo.procedureCode,
		procedureVersion: wo.procedureVersion
	};
	const status = statusOf(transitions.map((t) => ({ kind: t.kind as TransitionKind })));
	const steps = content.steps.map((step, i) => ({
		step,
		position: i + 1,
		status: withEvidence(stepStatus(step, entries, signoffs, passes), step.key, photos)
	}));
	const lastExecuted = transitions.findLast((t) => t.kind === 'executed');
	const trailReview =
		transitions.findLast(
			(t) => t.kind === 'trail_reviewed' && lastExecuted && t.auditSeq > lastExecuted.auditSeq
		) ?? null;
	const returned = transitions.findLast((t) => t.kind === 'returned') ?? null;
	return {
		wo,
		identity,
		content,
		plan: plans[0]!,
		plans,
		transitions,
		status,
		entries,
		signoffs,
		passes,
		photos,
		attributes: (equipmentData?.attributes ?? {}) as Record<string, unknown>,
		equipmentData,
		deviations: deviationRows,
		steps,
		trailReview,
		returned,
		/** Every row of the work order: the expected version of work-order-wide actions. */
		revision:
			plans.length +
			transitions.length +
			entries.length +
			signoffs.length +
			passes.length +
			photos.length +
			photos.filter((p) => p.voidId).length +
			deviationRows.length +
			deviationRows.filter((d) => d.dispositionId).length
	};
}
export type WorkOrderState = NonNullable<Awaited<ReturnType<typeof loadState>>>;

/** Photos attached to a step (and their voids) are rows on it: a save or signature names them too. */
function withEvidence(status: StepStatus, stepKey: string, photos: readonly EvidenceRow[]) {
	const mine = photos.filter((p) => p.stepKey === stepKey && !p.fieldKey);
	return {
		...status,
		revision: status.revision + mine.length + mine.filter((p) => p.voidId).length
	};
}

function workRecord(s: WorkOrderState, forRelease = false): SignedRecord {
	return workOrderSignedContent(
		s.identity,
		s.content.steps,
		s.entries,
		s.signoffs,
		s.deviations.map((d) => ({
			number: d.number,
			dispositionSignatureId: d.dispositionSignatureId
		})),
		forRelease
			? {
					trailReviewSignatureId: s.trailReview?.signatureId ?? null,
					executedSignatureId:
						s.transitions.findLast((t) => t.kind === 'executed')?.signatureId ?? null
				}
			: undefined
	);
}

/**
 * The hash of a work order's record as it stands (the release content once released, else the
 * execution content): what the PDF's verification block prints and the verification page checks.
 */
export function recordContentHash(s: WorkOrderState) {
	return contentHash(workRecord(s, s.status === 'released'));
}

function stepRecord(s: WorkOrderState, stepKey: string): SignedRecord {
	const found = s.steps.find((x) => x.step.key === stepKey)!;
	return stepSignedContent(s.identity, found.step, found.position, s.entries, s.photos);
}

/** The audit events of a work order (its own, its steps' and its deviations'), in order: what a trail review covers. */
async function trailOf(tx: Transaction, s: Pick<WorkOrderState, 'wo' | 'deviations'>) {
	const id = s.wo.id;
	const deviationIds = s.deviations.map((d) => d.id);
	return tx
		.select({
			seq: auditEvent.seq,
			at: auditEvent.at,
			actorName: auditEvent.actorName,
			action: auditEvent.action,
			entityType: auditEvent.entityType,
			entityId: auditEvent.entityId,
			newValues: auditEvent.newValues,
			previousValues: auditEvent.previousValues,
			reason: auditEvent.reason,
			hash: sql<string>`encode(${auditEvent.hash}, 'hex')`
		})
		.from(auditEvent)
		.where(
			or(
				eq(auditEvent.entityId, id),
				like(auditEvent.entityId, `${id}:%`),
				deviationIds.length ? inArray(auditEvent.entityId, deviationIds) : undefined
			)
		)
		.orderBy(asc(auditEvent.seq));
}

/** A work order as every page shows it: the record with names, signatures and the equipment's status. */
export async function getWorkOrder(id: string) {
	const s = await loadState(db(), id);
	if (!s) return undefined;
	const equipmentRow = s.equipmentData;
	const equipmentStatus = await currentEquipmentStatus(db(), s.wo.equipmentId);
	const people = s.plan.assignees.length
		? await db()
				.select({ id: accounts.id, name: accounts.fullName, username: accounts.username })
				.from(accounts)
				.where(inArray(accounts.id, s.plan.assignees))
		: [];
	const signatureIds = [
		...s.signoffs.map((x) => x.signatureId),
		...s.transitions.map((t) => t.signatureId),
		...s.deviations.map((d) => d.dispositionSignatureId)
	].filter((x): x is string => Boolean(x));
	const signatureRows = signatureIds.length
		? await db().select().from(signatures).where(inArray(signatures.id, signatureIds))
		: [];
	// Whether each signature still matches what it signed (ES3): its record as it is now.
	const current = new Map<string, string>();
	for (const { step } of s.steps)
		current.set(`work_order_step:${s.wo.id}:${step.key}`, contentHash(stepRecord(s, step.key)));
	current.set(`work_order:${s.wo.id}`, contentHash(workRecord(s)));
	current.set(`work_order_release:${s.wo.id}`, contentHash(workRecord(s, true)));
	const trail = await trailOf(db(), s);
	const sigs = signatureRows.map((row) => {
		let matches: boolean;
		if (row.recordType === 'work_order_trail') {
			// The review names the last event it covered; the events up to it must still hash the same.
			const review = trail.find(
				(e) =>
					e.action === 'work_order.trail_review' &&
					(e.newValues as { signatureId?: string } | null)?.signatureId === row.id
			);
			const through = (review?.newValues as { throughSeq?: number } | null)?.throughSeq ?? 0;
			const upTo = trail.filter((e) => e.seq <= through);
			matches = contentHash(trailSignedContent(s.identity, upTo)) === row.contentHash;
		} else if (row.recordType === 'deviation') {
			const d = s.deviations.find((x) => x.id === row.recordId)!;
			matches = contentHash(deviationRecord(s, d)) === row.contentHash;
		} else matches = current.get(`${row.recordType}:${row.recordId}`) === row.contentHash;
		return {
			id: row.id,
			meaning: row.meaning,
			signerName: row.signerName,
			signerId: row.signerId,
			signedAt: row.signedAt,
			contentHash: row.contentHash,
			matches
		};
	});
	const [released] = await db()
		.select({
			sha256: releasedRecords.sha256,
			size: releasedRecords.size,
			storedAt: releasedRecords.recordedAt,
			checkpointSize: releasedRecords.checkpointSize
		})
		.from(releasedRecords)
		.where(eq(releasedRecords.workOrderId, s.wo.id));
	return {
		...s,
		/** The released original PDF, once the outbox has stored it. */
		released: released ?? null,
		equipment: {
			id: s.wo.equipmentId,
			tag: s.wo.equipmentTag,
			description: equipmentRow?.description ?? '',
			equipmentClass: equipmentRow?.equipmentClass ?? 'other',
			attributes: equipmentRow?.attributes ?? {},
			status: equipmentStatus
		},
		assignees: s.plan.assignees.map(
			(a) => people.find((p) => p.id === a) ?? { id: a, name: 'unknown', username: '' }
		),
		signatures: sigs,
		trail
	};
}
export type WorkOrderView = NonNullable<Awaited<ReturnType<typeof getWorkOrder>>>;

function deviationRecord(s: WorkOrderState, d: WorkOrderState['deviations'][number]) {
	const field = s.content.steps
		.find((x) => x.key === d.stepKey)
		?.fields.find((f) => f.key === d.fieldKey);
	const entry = s.entries.find((e) => e.id === d.entryId);
	return deviationSignedContent({
		id: d.id,
		number: d.number,
		workOrder: s.wo.number,
		stepKey: d.stepKey,
		fieldKey: d.fieldKey,
		description: d.description,
		entryId: d.entryId,
		value: field && entry ? valueText(field, entry.value) : '',
		limits: field ? limitsText(field) : '',
		decision: (d.decision ?? 'accepted') as DeviationDecision,
		text: d.dispositionText ?? ''
	});
}

async function currentEquipmentStatus(tx: Transaction, equipmentId: string) {
	const [row] = await tx
		.select({ status: equipmentStatusChanges.status, sourceId: equipmentStatusChanges.sourceId })
		.from(equipmentStatusChanges)
		.where(eq(equipmentStatusChanges.equipmentId, equipmentId))
		.orderBy(desc(equipmentStatusChanges.auditSeq))
		.limit(1);
	return {
		status: (row?.status ?? 'in_service') as EquipmentStatus,
		sourceId: row?.sourceId ?? null
	};
}

export type WorkListFilter = {
	/** One piece of equipment (its page); `equipment` is a tag search. */
	equipmentId?: string;
	status?: WorkStatus | '';
	equipment?: string;
	kind?: WorkKind | '';
	assignee?: string;
	due?: 'overdue' | 'week' | '';
	sort?: 'due' | 'number' | 'equipment' | 'status';
};

/** The Work list: every work order of the site with its status, plan and progress; filtered and sorted. */
export async function listWorkOrders(siteId: string, filter: WorkListFilter = {}) {
	const site = await siteOrFail();
	const today = siteToday(site.timeZone);
	const rows = await db()
		.select({
			id: workOrders.id,
			number: workOrders.number,
			kind: workOrders.kind,
			equipmentId: workOrders.equipmentId,
			tag: equipment.tag,
			procedureCode: procedures.code,
			procedureVersion: procedureVersions.version,
			createdAt: workOrders.recordedAt
		})
		.from(workOrders)
		.innerJoin(equipment, eq(equipment.id, workOrders.equipmentId))
		.innerJoin(procedureVersions, eq(procedureVersions.id, workOrders.procedureVersionId))
		.innerJoin(procedures, eq(procedures.id, procedureVersions.procedureId))
		.where(
			and(
				eq(workOrders.siteId, siteId),
				filter.equipmentId ? eq(workOrders.equipmentId, filter.equipmentId) : undefined
			)
		);
	if (!rows.length) return [];
	const ids = rows.map((r) => r.id);
	const plans = await db()
		.select()
		.from(workOrderPlans)
		.where(inArray(workOrderPlans.workOrderId, ids))
		.orderBy(asc(workOrderPlans.version));
	const transitions = await db()
		.select({ workOrderId: workOrderTransitions.workOrderId, kind: workOrderTransitions.kind })
		.from(workOrderTransitions)
		.where(inArray(workOrderTransitions.workOrderId, ids))
		.orderBy(asc(workOrderTransitions.auditSeq));
	const openDeviations = await db()
		.select({ workOrderId: deviations.workOrderId, n: sql<number>`count(*)::int` })
		.from(deviations)
		.leftJoin(deviationDispositions, eq(deviationDispositions.deviationId, deviations.id))
		.where(and(inArray(deviations.workOrderId, ids), sql`${deviationDispositions.id} is null`))
		.groupBy(deviations.workOrderId);
	const people = await db().select({ id: accounts.id, name: accounts.fullName }).from(accounts);
	const nameOf = new Map(people.map((p) => [p.id, p.name]));
	const list = rows.map((r) => {
		const plan = plans.findLast((p) => p.workOrderId === r.id)!;
		const status = statusOf(
			transitions
				.filter((t) => t.workOrderId === r.id)
				.map((t) => ({ kind: t.kind as TransitionKind }))
		);
		const open = status === 'planned' || status === 'in_progress';
		return {
			...r,
			kind: r.kind as WorkKind,
			status,
			dueOn: plan.dueOn,
			priority: plan.priority as Priority,
			assignees: plan.assignees.map((a) => ({ id: a, name: nameOf.get(a) ?? 'unknown' })),
			overdue: open && plan.dueOn < today,
			openDeviations: openDeviations.find((d) => d.workOrderId === r.id)?.n ?? 0
		};
	});
	const q = filter.equipment?.trim().toUpperCase();
	const week = addDays(today, 7);
	const filtered = list.filter(
		(w) =>
			(!filter.status || w.status === filter.status) &&
			(!filter.kind || w.kind === filter.kind) &&
			(!q || w.tag.includes(q)) &&
			(!filter.assignee || w.assignees.some((a) => a.id === filter.assignee)) &&
			(!filter.due ||
				(filter.due === 'overdue'
					? w.overdue
					: (w.status === 'planned' || w.status === 'in_progress') && w.dueOn <= week))
	);
	const order: WorkStatus[] = ['in_progress', 'planned', 'executed', 'released', 'cancelled'];
	const by = filter.sort ?? 'due';
	return filtered.sort((a, b) =>
		by === 'number'
			? b.number.localeCompare(a.number)
			: by === 'equipment'
				? a.tag.localeCompare(b.tag) || a.dueOn.localeCompare(b.dueOn)
				: by === 'status'
					? order.indexOf(a.status) - order.indexOf(b.status) || a.dueOn.localeCompare(b.dueOn)
					: a.dueOn.localeCompare(b.dueOn) || a.number.localeCompare(b.number)
	);
}

// ── Planning ─────────────────────────────────────────────────────────────────

export type NewWorkOrder = {
	kind: WorkKind;
	equipmentId: string;
	procedureId: string;
	dueOn: string;
	priority: Priority;
	assignees: string[];
	notes: string;
	followsUp?: string | null;
	/** Made by a PM schedule (9/10): the schedule and its basis (the unique key of one due date). */
	pm?: { scheduleId: string; basis: string } | null;
};

/** Technicians who may be assigned: active accounts holding the technician role. */
export async function assignableTechnicians() {
	return db()
		.select({ id: accounts.id, name: accounts.fullName, username: accounts.username })
		.from(accounts)
		.where(and(eq(accounts.active, true), sql`'technician' = any(${accounts.roles})`))
		.orderBy(asc(accounts.fullName));
}

async function checkAssignees(tx: Transaction, ids: string[]) {
	if (new Set(ids).size !== ids.length)
		throw new RecordError('A person is assigned twice.', 'assignees');
	if (!ids.length) return;
	const rows = await tx
		.select({ id: accounts.id, active: accounts.active, roles: accounts.roles })
		.from(accounts)
		.where(inArray(accounts.id, ids));
	for (const id of ids) {
		const a = rows.find((r) => r.id === id);
		if (!a || !a.active || !a.roles.includes('technician'))
			throw new RecordError('Assign only active technicians.', 'assignees');
	}
}

/**
 * The next number of a kind (WO, DEV) for the year. Numbers are unique across the database, so
 * the lock and the count are too (one sequence for every site).
 */
export async function nextNumber(tx: Transaction, prefix: 'WO' | 'DEV', year: string) {
	await tx.execute(
		sql`select pg_advisory_xact_lock(hashtextextended(${`${prefix}-number:${year}`}, 0))`
	);
	// Deviations of work orders and of SIP cycles (9/10) share one series.
	const tables = prefix === 'WO' ? [workOrders] : [deviations, sipDeviations];
	let n = 0;
	for (const table of tables) {
		const [row] = await tx
			.select({ n: sql<number>`count(*)::int` })
			.from(table)
			.where(like(table.number, `${prefix}-${year}-%`));
		n += row?.n ?? 0;
	}
	return `${prefix}-${year}-${String(n + 1).padStart(4, '0')}`;
}

/** A Planner creates a work order on the effective version of the procedure (pinned: MR1). */
export async function createWorkOrder(
	by: Recorder,
	input: NewWorkOrder,
	clientAddress: string | null = null,
	/** More to do in the creating transaction (the follow-up's e-mails, 9/10). */
	also?: (tx: Transaction, made: { id: string; number: string; auditSeq: number }) => Promise<void>
) {
	await mustHold(by, ['planner'], 'create work orders');
	const site = await siteOrFail();
	const effective = await effectiveVersion(input.procedureId);
	if (!effective)
		throw new RecordError(
			'This procedure has no approved version: work can only follow an approved procedure.',
			'procedureId'
		);
	const [eq0] = await db()
		.select({ id: equipment.id, tag: equipment.tag, siteId: equipment.siteId })
		.from(equipment)
		.where(eq(equipment.id, input.equipmentId));
	if (!eq0 || eq0.siteId !== site.id)
		throw new RecordError('Choose equipment of this site.', 'equipmentId');
	const [ev] = await db()
		.select({ equipmentClass: equipmentVersions.equipmentClass })
		.from(equipmentVersions)
		.where(eq(equipmentVersions.equipmentId, input.equipmentId))
		.orderBy(desc(equipmentVersions.version))
		.limit(1);
	if (effective.content.appliesTo && ev?.equipmentClass !== effective.content.appliesTo)
		throw new RecordError(
			`This procedure applies to another class of equipment than ${eq0.tag}.`,
			'procedureId'
		);
	const id = randomUUID();
	return db().transaction(async (tx) => {
		await checkAssignees(tx, input.assignees);
		const number = await nextNumber(tx, 'WO', siteToday(site.timeZone).slice(0, 4));
		const rec = await appendRecordEvent(tx, by, {
			action: 'work_order.create',
			entityType: 'work_order',
			entityId: id,
			newValues: {
				number,
				kind: input.kind,
				equipment: eq0.tag,
				procedure: { versionId: effective.id, version: effective.version },
				dueOn: input.dueOn,
				priority: input.priority,
				assignees: input.assignees,
				notes: input.notes,
				followsUp: input.followsUp ?? null,
				...(input.pm ? { pmSchedule: input.pm.scheduleId, pmBasis: input.pm.basis } : {})
			},
			clientAddress
		});
		await tx.insert(workOrders).values({
			id,
			siteId: site.id,
			number,
			kind: input.kind,
			equipmentId: input.equipmentId,
			procedureVersionId: effective.id,
			followsUp: input.followsUp ?? null,
			pmScheduleId: input.pm?.scheduleId ?? null,
			pmBasis: input.pm?.basis ?? null,
			...rec
		});
		await tx.insert(workOrderPlans).values({
			id: randomUUID(),
			workOrderId: id,
			version: 1,
			dueOn: input.dueOn,
			priority: input.priority,
			assignees: input.assignees,
			notes: input.notes,
			reason: null,
			...rec
		});
		await tx.insert(workOrderTransitions).values({
			id: randomUUID(),
			workOrderId: id,
			kind: 'planned',
			reason: null,
			signatureId: null,
			...rec
		});
		if (also) await also(tx, { id, number, auditSeq: rec.auditSeq });
		return { id, number };
	});
}

function mustBeUnchanged(s: WorkOrderState, seen: number) {
	if (s.revision !== seen)
		throw new RecordError(
			'This work order changed since you opened it. The page now shows it as it is: check it, then try again.',
			undefined,
			409
		);
}

/** Cancel before execution starts (Planner), with a reason. */
export async function cancelWorkOrder(
	by: Recorder,
	id: string,
	reason: string,
	seen: number,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'cancel work orders', { type: 'work_order', id });
	needReason(reason);
	reason = reason.trim();
	await db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = await loadState(tx, id);
		if (!s) throw new RecordError('No such work order.', undefined, 404);
		if (s.status !== 'planned')
			throw new RecordError(
				`A work order can be cancelled only before execution starts; this one is ${workStatusLabels[s.status]}.`,
				undefined,
				409
			);
		mustBeUnchanged(s, seen);
		const rec = await appendRecordEvent(tx, by, {
			action: 'work_order.cancel',
			entityType: 'work_order',
			entityId: id,
			newValues: { status: 'cancelled' },
			previousValues: { status: s.status },
			reason,
			clientAddress
		});
		await tx.insert(workOrderTransitions).values({
			id: randomUUID(),
			workOrderId: id,
			kind: 'cancelled',
			reason,
			signatureId: null,
			...rec
		});
	});
}

/** Change the plan (due date, priority, assignees, notes) before the work is executed, with a reason. */
export async function changePlan(
	by: Recorder,
	id: string,
	plan: { dueOn: string; priority: Priority; assignees: string[]; notes: string },
	reason: string,
	seen: number,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'plan work orders', { type: 'work_order', id });
	needReason(reason);
	reason = reason.trim();
	await db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = await loadState(tx, id);
		if (!s) throw new RecordError('No such work order.', undefined, 404);
		if (s.status !== 'planned' && s.status !== 'in_progress')
			throw new RecordError('The plan of executed or closed work cannot change.', undefined, 409);
		mustBeUnchanged(s, seen);
		await checkAssignees(tx, plan.assignees);
		const before = {
			dueOn: s.plan.dueOn,
			priority: s.plan.priority,
			assignees: s.plan.assignees,
			notes: s.plan.notes
		};
		if (JSON.stringify(before) === JSON.stringify(plan))
			throw new RecordError('Nothing was changed.', 'reason');
		const version = s.plan.version + 1;
		const rec = await appendRecordEvent(tx, by, {
			action: 'work_order.plan',
			entityType: 'work_order',
			entityId: id,
			newValues: { version, ...plan },
			previousValues: { version: s.plan.version, ...before },
			reason,
			clientAddress
		});
		await tx
			.insert(workOrderPlans)
			.values({ id: randomUUID(), workOrderId: id, version, ...plan, reason, ...rec });
	});
}

// ── Execution ────────────────────────────────────────────────────────────────

/** Under the work order's lock: still assigned (a plan change may have removed the person meanwhile). */
/** Work is entered only while the work order is in progress: 409 with what to do otherwise. */
export function mustBeInProgress(s: WorkOrderState, doing: string, noLonger: string) {
	if (s.status !== 'in_progress')
		throw new RecordError(
			s.status === 'planned'
				? `Start the work order before ${doing}.`
				: `This work order is ${workStatusLabels[s.status]}: ${noLonger}.`,
			undefined,
			409
		);
}

/** A signed step takes no more passes or photos, unless Quality returned the record. */
export function mustBeUnsigned(s: WorkOrderState, stepKey: string, noLonger: string) {
	const step = s.steps.find((x) => x.step.key === stepKey)!;
	const reopened = s.transitions.at(-1)?.kind === 'returned';
	if ((step.status.state === 'performed' || step.status.state === 'verified') && !reopened)
		throw new RecordError(`This step is signed: ${noLonger}.`, undefined, 409);
}

export function stillAssigned(user: User, s: WorkOrderState) {
	if (!s.plan.assignees.includes(user.id))
		throw new RecordError(
			'You are no longer assigned to this work order: the Planner changed the plan.',
			undefined,
			403
		);
}

export async function mustBeAssignedAndQualified(
	user: User,
	s: WorkOrderState,
	what: string,
	day: string
) {
	const by = personOf(user);
	await mustHold(by, ['technician'], what, { type: 'work_order', id: s.wo.id });
	if (!s.plan.assignees.includes(user.id))
		await refuse(
			by,
			'You are not assigned to this work order: the Planner assigns it.',
			{
				rule: 'assigned',
				what
			},
			{ type: 'work_order', id: s.wo.id }
		);
	if (!(await isQualified(user.id, s.wo.procedureId, day)))
		await refuse(
			by,
			`You are not currently qualified on ${s.wo.procedureCode}: your training record has lapsed or is missing.`,
			{ rule: 'qualified', what },
			{ type: 'work_order', id: s.wo.id }
		);
}

/**
 * An assigned, qualified Technician starts the work: the equipment goes Out of service. The
 * equipment must not be under another work order at the time.
 */
export async function startWorkOrder(
	user: User,
	id: string,
	seen: number,
	clientAddress: string | null = null
) {
	const by = personOf(user);
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	await mustBeAssignedAndQualified(user, s0, 'start this work order', siteToday(site.timeZone));
	// MR1: work starts only on the version in force; a version superseded since planning cannot start.
	const effective = await effectiveVersion(s0.wo.procedureId);
	if (effective && effective.id !== s0.wo.procedureVersionId)
		throw new RecordError(
			`${s0.wo.procedureCode} version ${s0.wo.procedureVersion} was superseded by version ${effective.version} after this work was planned: cancel it and plan it again on the version in force.`,
			undefined,
			409
		);
	await db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = (await loadState(tx, id))!;
		stillAssigned(user, s);
		if (s.status !== 'planned')
			throw new RecordError(
				`This work order is ${workStatusLabels[s.status]}: only planned work can start.`,
				undefined,
				409
			);
		mustBeUnchanged(s, seen);
		// The equipment's own lock before its status is read: two work orders cannot both take it.
		await lockEquipment(tx, s.wo.equipmentId);
		const eqStatus = await currentEquipmentStatus(tx, s.wo.equipmentId);
		if (eqStatus.status === 'quarantined')
			throw new RecordError(
				`${s.wo.equipmentTag} is Quarantined: Quality ends the quarantine (with its reason) before work starts.`,
				undefined,
				409
			);
		if (
			(eqStatus.status === 'out_of_service' || eqStatus.status === 'awaiting_release') &&
			eqStatus.sourceId !== id
		)
			throw new RecordError(
				`${s.wo.equipmentTag} is ${equipmentStatusLabels[eqStatus.status]} under other work: that work must be released first.`,
				undefined,
				409
			);
		const rec = await appendRecordEvent(tx, by, {
			action: 'work_order.start',
			entityType: 'work_order',
			entityId: id,
			newValues: { status: 'in_progress' },
			previousValues: { status: s.status },
			clientAddress
		});
		await tx.insert(workOrderTransitions).values({
			id: randomUUID(),
			workOrderId: id,
			kind: 'started',
			reason: null,
			signatureId: null,
			...rec
		});
		await setStatus(
			tx,
			by,
			s.wo.equipmentId,
			'out_of_service',
			`Work order ${s.wo.number} started`,
			{ type: 'work_order', id },
			clientAddress
		);
	});
}

export type StepSave = {
	/** Raw form text per field key; empty = not entered. */
	values: Record<string, string>;
	/** Reason for each corrected field. */
	reasons: Record<string, string>;
	/** Description of the deviation for each value outside its limits. */
	deviations: Record<string, string>;
	/** The unit each number was entered in, where it is not the procedure's (6/10). */
	units?: Record<string, string>;
	/** The torque wrench of each tightening field, by instrument id (6/10). */
	wrenches?: Record<string, string>;
	/** When the work was done: an instant, or null for now (the server's clock). */
	performedAt: Date | null;
	lateReason: string;
	seen: number;
};

export const staleStep = () =>
	new RecordError(
		'This step changed since you opened it (someone saved or signed it). What you typed is still in the form: check the step as it is now, then save again.',
		undefined,
		409
	);

/** Refusals of a step save, per field, so that the person sees each beside its input. */
export class EntryErrors extends RecordError {
	constructor(
		readonly fields: Record<string, string>,
		status: 400 | 422 = 400
	) {
		super(Object.values(fields)[0] ?? 'Check the values.', undefined, status);
	}
}

/** Resolves a lot or an instrument and checks it against the equipment and the day (MR3). */
type Resolved = { value: EntryValue; lotId?: string; instrumentId?: string; dueOn?: string };

async function resolveValue(
	field: ProcedureField,
	parsed: EntryValue | { lotId: string } | { instrumentId: string },
	s: WorkOrderState,
	day: string,
	stepFields: readonly ProcedureField[] = []
): Promise<Resolved | string> {
	if ('lotId' in parsed && !('partNumber' in parsed)) {
		const [lot] = await db()
			.select({
				id: partLots.id,
				partId: partLots.partId,
				supplierLot: partLots.supplierLot,
				expiresOn: partLots.expiresOn,
				receivedOn: partLots.receivedOn,
				partNumber: parts.partNumber,
				siteId: parts.siteId
			})
			.from(partLots)
			.innerJoin(parts, eq(parts.id, partLots.partId))
			.where(eq(partLots.id, parsed.lotId));
		if (!lot || lot.siteId !== s.wo.siteId) return 'Choose a lot received at this site.';
		const [pv] = await db()
			.select({ materialCode: partVersions.materialCode })
			.from(partVersions)
			.where(eq(partVersions.partId, lot.partId))
			.orderBy(desc(partVersions.version))
			.limit(1);
		const wanted = String(s.attributes.diaphragmMaterialCode ?? '');
		if (!pv || pv.materialCode !== wanted)
			return `Wrong part: ${lot.partNumber} is material ${pv?.materialCode ?? '?'}, ${s.wo.equipmentTag} needs ${wanted || 'a material code set on the equipment'}. Do not fit it.`;
		if (lot.receivedOn > day)
			return `Lot ${lot.supplierLot} was received on ${lot.receivedOn}, after the day of this work.`;
		if (lot.expiresOn && lot.expiresOn < day)
			return `Lot ${lot.supplierLot} expired on ${lot.expiresOn}: do not fit it.`;
		return {
			value: {
				lotId: lot.id,
				partNumber: lot.partNumber,
				supplierLot: lot.supplierLot,
				materialCode: pv.materialCode,
				expiresOn: lot.expiresOn
			},
			lotId: lot.id
		};
	}
	if ('instrumentId' in parsed && !('code' in parsed)) {
		const found = await getInstrument(parsed.instrumentId, day);
		if (!found || found.siteId !== s.wo.siteId) return 'Choose an instrument from the list.';
		if (
			field.instrumentKind &&
			found.current.kind.toLowerCase() !== field.instrumentKind.toLowerCase()
		)
			return `This step needs a ${field.instrumentKind.toLowerCase()}; ${found.code} is a ${found.current.kind.toLowerCase()}.`;
		const fitness = await instrumentFitness(found.id, day);
		if (!fitness.usable)
			return `${found.code} cannot be used on ${day}: ${fitness.why === 'expired' ? 'its calibration has expired' : fitness.why === 'retired' ? 'it is withdrawn from use' : fitness.why === 'failed' ? 'its last calibration failed' : 'it has no valid calibration'}.`;
		const tur = turOf(stepFields, found.current);
		return {
			value: {
				instrumentId: found.id,
				code: found.code,
				kind: found.current.kind,
				calibrationDueOn: fitness.calibration.dueOn,
				...(tur.length ? { tur } : {})
			},
			instrumentId: found.id,
			dueOn: fitness.calibration.dueOn
		};
	}
	return { value: parsed as EntryValue };
}

/**
 * Guided tightening: the final entry of a tightening field, built on the server from the passes
 * ticked in the current round (all of them, in order), the final torque and the wrench.
 */
async function resolveTightening(
	field: ProcedureField,
	raw: { torque: string; unit: string; wrench: string },
	s: WorkOrderState,
	stepKey: string,
	day: string
): Promise<Resolved | string> {
	const plan = planOf(field, s);
	if (!plan.ok) return plan.message;
	const progress = passProgress(s.passes, stepKey, field.key);
	if (progress.done.length < plan.value.length)
		return `Tick every pass first: ${progress.done.length} of ${plan.value.length} done.`;
	const torque = parseNumber(raw.torque);
	if (!raw.torque.trim()) return 'Enter the final torque the wrench was set to.';
	if (!torque) return 'Enter the final torque as a number.';
	if (torque.decimals > 3) return 'Enter the final torque with at most 3 decimals.';
	if (torque.number <= 0) return 'The final torque must be above zero.';
	const unit = raw.unit.trim() || 'N·m';
	if (quantityOf(unit) !== 'torque') return 'Choose the unit of torque the wrench shows.';
	const wrenchField = { ...field, kind: 'instrument' as const, instrumentKind: 'Torque wrench' };
	const parsed = parseEntry(wrenchField, raw.wrench);
	if (!parsed) return 'Choose the torque wrench you used.';
	if (!parsed.ok) return parsed.message;
	const wrench = await resolveValue(wrenchField, parsed.value, s, day);
	if (typeof wrench === 'string') return wrench;
	const w = wrench.value as Extract<EntryValue, { instrumentId: string }>;
	return {
		value: {
			tightening: {
				pattern: field.pattern,
				fasteners: Number(s.attributes.bonnetFasteners),
				sequence: plan.value[0]!.sequence,
				round: progress.round,
				passes: progress.done.map((p) => ({
					pass: p.pass,
					name: p.name,
					targetTorque: p.targetTorque,
					unit: p.unit,
					at: p.recordedAt,
					by: p.recordedByName
				}))
			},
			finalTorque: { number: torque.number, unit },
			targetTorque: plan.value.at(-1)!.torque,
			wrench: {
				instrumentId: w.instrumentId,
				code: w.code,
				kind: w.kind,
				calibrationDueOn: w.calibrationDueOn
			}
		},
		instrumentId: wrench.instrumentId,
		dueOn: wrench.dueOn
	};
}

/** The passes a tightening field guides on this equipment, from the manufacturer's figures in its data. */
function planOf(field: ProcedureField, s: Pick<WorkOrderState, 'attributes'>) {
	const torque = s.attributes.fastenerTorqueNm;
	return passesFor(
		field.pattern,
		Number(s.attributes.bonnetFasteners),
		typeof torque === 'number' ? torque : null
	);
}

/**
 * Saves the entries of one step: new values, and corrections of saved ones (each with a reason;
 * the old entry stays). A value outside its limits needs a description and raises a deviation.
 * "Performed at" more than 15 minutes back needs a reason (DI1). Nothing is stored if anything
 * is refused.
 */
export async function saveStep(
	user: User,
	id: string,
	stepKey: string,
	input: StepSave,
	clientAddress: string | null = null
) {
	const by = personOf(user);
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	const found = s0.steps.find((x) => x.step.key === stepKey);
	if (!found) throw new RecordError('No such step in this procedure.', undefined, 404);
	const now = new Date();
	const performedAt = input.performedAt ?? now;
	const day = siteToday(site.timeZone, performedAt);
	await mustBeAssignedAndQualified(user, s0, 'enter values on this work order', day);
	// The expected version first: a person who saw an older step gets 409, not a refusal about values they never saw.
	if (found.status.revision !== input.seen) throw staleStep();
	if (performedAt.getTime() > now.getTime() + 60_000)
		throw new EntryErrors({ performedAt: '“Performed at” cannot be in the future.' });
	if (!isStorableText(input.lateReason) || input.lateReason.length > 500)
		throw new EntryErrors({ lateReason: 'Keep the reason under 500 characters, in plain text.' });
	const late = now.getTime() - performedAt.getTime() > LATE_ENTRY_MINUTES * 60_000;
	if (late && !input.lateReason.trim())
		throw new EntryErrors(
			{
				lateReason: `“Performed at” is more than ${LATE_ENTRY_MINUTES} minutes ago: say why the entry is late.`
			},
			422
		);
	const started = s0.transitions.find((t) => t.kind === 'started');
	if (started && performedAt < started.recordedAt)
		throw new EntryErrors({
			performedAt: '“Performed at” cannot be before the work order was started.'
		});

	// Parse and check every field before anything is written.
	const errors: Record<string, string> = {};
	let reasonMissing = false;
	const changes: {
		field: ProcedureField;
		resolved: Resolved;
		within: boolean | null;
		corrects: EntryRow | null;
		entryId: string;
		/** A correction's reason written by the server (a recalculation), else the person's. */
		reason: string | null;
	}[] = [];
	const current = new Map(
		s0.entries
			.filter((e) => e.stepKey === stepKey && !s0.entries.some((later) => later.corrects === e.id))
			.map((e) => [e.fieldKey, e])
	);
	const own = (r: Record<string, string> | undefined, key: string) =>
		r && Object.hasOwn(r, key) ? (r[key] ?? '') : '';
	for (const field of found.step.fields) {
		if (!enterable(field)) continue;
		const raw = own(input.values, field.key);
		let resolved: Resolved | string;
		if (field.kind === 'tightening') {
			const wrench = own(input.wrenches, field.key);
			if (!raw.trim() && !wrench.trim()) continue;
			resolved = await resolveTightening(
				field,
				{ torque: raw, unit: own(input.units, field.key), wrench },
				s0,
				stepKey,
				day
			);
		} else {
			const parsed = parseEntry(field, raw, own(input.units, field.key));
			if (parsed === null) continue;
			if (!parsed.ok) {
				errors[field.key] = parsed.message;
				continue;
			}
			resolved = await resolveValue(field, parsed.value, s0, day, found.step.fields);
		}
		if (typeof resolved === 'string') {
			errors[field.key] = resolved;
			continue;
		}
		const previous = current.get(field.key) ?? null;
		for (const [kind, text, max] of [
			['reason', input.reasons[field.key] ?? '', 500],
			['deviation', input.deviations[field.key] ?? '', 2000]
		] as const) {
			if (!isStorableText(text)) errors[`${kind}:${field.key}`] = unstorableTextMessage;
			else if (text.length > max)
				errors[`${kind}:${field.key}`] = `Keep it under ${max} characters.`;
		}
		if (previous && sameValue(field, previous.value, resolved.value)) continue;
		const within = withinLimits(field, resolved.value);
		// A tightening redone after its passes were started again is corrected for the restart's reason.
		const restart =
			field.kind === 'tightening' && previous
				? passProgress(s0.passes, stepKey, field.key).restarts.at(-1)
				: undefined;
		const autoReason =
			restart && 'tightening' in previous!.value && previous!.value.tightening.round < restart.round
				? `Passes started again: ${restart.reason}`
				: null;
		if (previous && !autoReason && !(input.reasons[field.key] ?? '').trim()) {
			errors[`reason:${field.key}`] =
				'This changes a saved value: give the reason for the correction.';
			reasonMissing = true;
		}
		if (within === false && !(input.deviations[field.key] ?? '').trim()) {
			errors[`deviation:${field.key}`] =
				field.kind === 'tightening'
					? 'The final torque is not the valve’s figure: describe what you found. A deviation is raised for Quality.'
					: 'This value is outside its limits: describe what you found. A deviation is raised for Quality.';
			reasonMissing = true;
		}
		changes.push({
			field,
			resolved,
			within,
			corrects: previous,
			entryId: randomUUID(),
			reason: (input.reasons[field.key] ?? '').trim() ? null : autoReason
		});
	}
	// Calculated fields: computed here from the values in force after this save, never taken from the browser.
	for (const field of found.step.fields) {
		// A calculated field of a version approved before 6/10 names no inputs: it is shown, not computed.
		if (
			field.kind !== 'calculated' ||
			!field.calculation ||
			!field.inputs.length ||
			Object.keys(errors).length
		)
			continue;
		const formula = formulas[field.calculation];
		const sources = field.inputs.map((key) => {
			const change = changes.find((c) => c.field.key === key);
			if (change)
				return { field: change.field, value: change.resolved.value, entryId: change.entryId };
			const saved = current.get(key);
			const f = found.step.fields.find((x) => x.key === key);
			return saved && f ? { field: f, value: saved.value, entryId: saved.id } : null;
		});
		if (sources.some((x) => !x) || !sources.every((x) => x && 'number' in x.value)) continue;
		const inputs = sources.map((x) => {
			const v = x!.value as { number: number; unit?: string };
			return { value: v.number, unit: v.unit ?? x!.field.unit };
		});
		const band = formula.bandFromEquipment ? bandOf(s0.attributes) : null;
		const result = evaluate(field.calculation, inputs, field.decimals, band);
		if (!result.ok) {
			errors[field.key] = result.message;
			continue;
		}
		const value: EntryValue = {
			calculated: result.value.value,
			unit: formula.unit,
			formula: field.calculation,
			expression: formula.expression,
			inputs: sources.map((x, i) => ({
				field: x!.field.key,
				label: x!.field.label,
				symbol: formula.inputs[i]!.symbol,
				entryId: x!.entryId,
				number: inputs[i]!.value,
				unit: inputs[i]!.unit
			})),
			judgement: result.value.judgement,
			band
		};
		const previous = current.get(field.key) ?? null;
		if (previous && sameValue(field, previous.value, value)) continue;
		const within = withinLimits(field, value);
		if (within === false && !(input.deviations[field.key] ?? '').trim()) {
			errors[`deviation:${field.key}`] = formula.bandFromEquipment
				? 'The compression is outside the valve’s band: describe what you found. A deviation is raised for Quality.'
				: 'This result is outside its limits: describe what you found. A deviation is raised for Quality.';
			reasonMissing = true;
		}
		const corrected = sources
			.filter((x) => changes.some((c) => c.entryId === x!.entryId && c.corrects))
			.map((x) => x!.field.label.toLowerCase());
		changes.push({
			field,
			resolved: { value },
			within,
			corrects: previous,
			entryId: randomUUID(),
			reason: previous
				? `Recalculated from ${corrected.length ? `the corrected ${corrected.join(' and ')}` : 'new inputs'}.`
				: null
		});
	}
	if (Object.keys(errors).length) throw new EntryErrors(errors, reasonMissing ? 422 : 400);
	if (!changes.length) throw new EntryErrors({ form: 'Nothing new to save on this step.' });

	return thenKick(
		db().transaction(async (tx) => {
			await lockWorkOrder(tx, id);
			const s = (await loadState(tx, id))!;
			stillAssigned(user, s);
			mustBeInProgress(s, 'entering values', 'values can no longer be entered');
			const step = s.steps.find((x) => x.step.key === stepKey)!;
			if (step.status.revision !== input.seen) throw staleStep();
			// After Quality returns the record, verified steps may be corrected (and signed again).
			const reopened = s.transitions.at(-1)?.kind === 'returned';
			if (step.status.state === 'verified' && !reopened)
				throw new RecordError(
					'This step is verified: it can be corrected only after Quality returns the work order.',
					undefined,
					409
				);
			const saved: { field: string; entryId: string; deviation: string | null }[] = [];
			for (const c of changes) {
				const entryId = c.entryId;
				const reason = c.corrects ? (c.reason ?? input.reasons[c.field.key]!.trim()) : null;
				const rec = await appendRecordEvent(tx, by, {
					action: c.corrects ? 'work_order.entry_correct' : 'work_order.entry',
					entityType: 'work_order',
					entityId: id,
					newValues: {
						entryId,
						step: stepKey,
						field: c.field.key,
						value: c.resolved.value,
						text: valueText(c.field, c.resolved.value),
						withinLimits: c.within,
						performedAt: iso(performedAt),
						lateReason: late ? input.lateReason.trim() : null
					},
					previousValues: c.corrects
						? {
								entryId: c.corrects.id,
								value: c.corrects.value,
								text: valueText(c.field, c.corrects.value),
								withinLimits: c.corrects.withinLimits
							}
						: null,
					reason,
					clientAddress
				});
				await tx.insert(stepEntries).values({
					id: entryId,
					workOrderId: id,
					stepKey,
					fieldKey: c.field.key,
					value: c.resolved.value,
					withinLimits: c.within,
					lotId: c.resolved.lotId ?? null,
					instrumentId: c.resolved.instrumentId ?? null,
					calibrationDueOn: c.resolved.dueOn ?? null,
					performedAt,
					lateReason: late ? input.lateReason.trim() : null,
					corrects: c.corrects?.id ?? null,
					reason,
					...rec
				});
				let deviation: string | null = null;
				if (c.within === false) {
					const number = await nextNumber(tx, 'DEV', day.slice(0, 4));
					const deviationId = randomUUID();
					const description = input.deviations[c.field.key]!.trim();
					const drec = await appendRecordEvent(tx, by, {
						action: 'deviation.raise',
						entityType: 'work_order',
						entityId: id,
						newValues: {
							deviationId,
							number,
							step: stepKey,
							field: c.field.key,
							entryId,
							value: valueText(c.field, c.resolved.value),
							description
						},
						clientAddress
					});
					await tx.insert(deviations).values({
						id: deviationId,
						number,
						workOrderId: id,
						stepKey,
						fieldKey: c.field.key,
						entryId,
						description,
						...drec
					});
					await notifyDeviation(
						tx,
						workRef(s0),
						{ number, stepKey, stepPosition: found.position, description },
						user.name,
						[user.id, ...hands(s0)],
						drec.auditSeq
					);
					deviation = number;
				}
				saved.push({ field: c.field.key, entryId, deviation });
			}
			return saved;
		})
	);
}

/**
 * Guided tightening (6/10 item 8): ticks pass `pass` of a tightening field, with the database's
 * time. Passes are ticked in order — the server refuses any other (409), and a database rule
 * holds the same. Refused once the step is signed or the round's passes are saved in its entry.
 */
export async function tickPass(
	user: User,
	id: string,
	stepKey: string,
	fieldKey: string,
	pass: number,
	seen: number,
	clientAddress: string | null = null
) {
	return passAction(user, id, stepKey, fieldKey, seen, clientAddress, { pass });
}

/** Starts the passes of a tightening field again (a new round), with the reason; the old ones stay. */
export async function restartPasses(
	user: User,
	id: string,
	stepKey: string,
	fieldKey: string,
	reason: string,
	seen: number,
	clientAddress: string | null = null
) {
	return passAction(user, id, stepKey, fieldKey, seen, clientAddress, { reason });
}

async function passAction(
	user: User,
	id: string,
	stepKey: string,
	fieldKey: string,
	seen: number,
	clientAddress: string | null,
	what: { pass: number } | { reason: string }
) {
	const by = personOf(user);
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	const found = s0.steps.find((x) => x.step.key === stepKey);
	const field = found?.step.fields.find((f) => f.key === fieldKey && f.kind === 'tightening');
	if (!found || !field)
		throw new RecordError('No such tightening field on this step.', undefined, 404);
	const day = siteToday(site.timeZone);
	await mustBeAssignedAndQualified(user, s0, 'tighten on this work order', day);
	if ('reason' in what) {
		const reason = what.reason.trim();
		if (!reason) throw new EntryErrors({ reason: 'Say why the passes start again.' }, 422);
		if (!isStorableText(reason) || reason.length > 500)
			throw new EntryErrors({ reason: 'Keep the reason under 500 characters, in plain text.' });
	} else if (!Number.isInteger(what.pass) || what.pass < 1 || what.pass > 20)
		throw new EntryErrors({ pass: 'Tick one of the passes shown.' });
	return db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = (await loadState(tx, id))!;
		stillAssigned(user, s);
		mustBeInProgress(s, 'tightening', 'passes can no longer be ticked');
		const step = s.steps.find((x) => x.step.key === stepKey)!;
		if (step.status.revision !== seen) throw staleStep();
		mustBeUnsigned(s, stepKey, 'the tightening can no longer change on it');
		const plan = planOf(field, s);
		if (!plan.ok) throw new RecordError(plan.message, undefined, 409);
		const progress = passProgress(s.passes, stepKey, fieldKey);
		const saved = currentEntries(step.step, s.entries).find((e) => e.fieldKey === fieldKey);
		const savedRound = saved && 'tightening' in saved.value ? saved.value.tightening.round : null;
		let row: {
			round: number;
			pass: number;
			name: string;
			targetTorque: number | null;
			reason: string | null;
		};
		if ('reason' in what) {
			if (!progress.done.length)
				throw new RecordError(
					'No pass is ticked yet: there is nothing to start again.',
					undefined,
					409
				);
			row = {
				round: progress.round + 1,
				pass: 0,
				name: 'Passes started again',
				targetTorque: null,
				reason: what.reason.trim()
			};
		} else {
			if (savedRound === progress.round)
				throw new RecordError(
					'These passes are saved with the final torque: start the passes again, with a reason, to redo them.',
					undefined,
					409
				);
			if (progress.next > plan.value.length)
				throw new RecordError(
					'Every pass is ticked: enter the final torque and the wrench, then save.',
					undefined,
					409
				);
			if (what.pass !== progress.next)
				throw new RecordError(
					what.pass < progress.next
						? `That pass is already ticked; next is: ${plan.value[progress.next - 1]!.name}.`
						: `Tick the passes in order: next is ${plan.value[progress.next - 1]!.name}.`,
					undefined,
					409
				);
			const p = plan.value[what.pass - 1]!;
			row = {
				round: progress.round,
				pass: what.pass,
				name: p.name,
				targetTorque: p.torque,
				reason: null
			};
		}
		const rowId = randomUUID();
		const rec = await appendRecordEvent(tx, by, {
			action: 'reason' in what ? 'work_order.tightening_restart' : 'work_order.tightening_pass',
			entityType: 'work_order',
			entityId: id,
			newValues: {
				passId: rowId,
				step: stepKey,
				field: fieldKey,
				round: row.round,
				pass: row.pass,
				name: row.name,
				targetTorque: row.targetTorque,
				unit: 'N·m'
			},
			reason: row.reason,
			clientAddress
		});
		await tx.insert(tighteningPasses).values({
			id: rowId,
			workOrderId: id,
			stepKey,
			fieldKey,
			...row,
			unit: 'N·m',
			...rec
		});
		return row;
	});
}

/** A refused signature that is a security event (segregation of duties): audited, then 403. */
async function refuseSignature(
	user: User,
	record: SignedRecord,
	meaning: SignatureMeaning,
	reason: string,
	message: string,
	clientAddress: string | null
): Promise<never> {
	await recordEventNow({
		actor: personOf(user),
		action: 'signature.refused',
		entityType: record.type,
		entityId: record.id,
		newValues: { meaning, reason, message },
		clientAddress
	});
	throw new RecordError(message, undefined, 403);
}

/**
 * Who had a hand in the work: entered a value or signed a step (of one step, or of any), and —
 * for the whole work order — who started it or signed it Executed. Quality must be none of them.
 */
const hands = (s: WorkOrderState, stepKey?: string) =>
	new Set(
		[
			...s.entries.filter((e) => !stepKey || e.stepKey === stepKey).map((e) => e.recordedBy),
			...s.signoffs
				.filter((x) => (!stepKey || x.stepKey === stepKey) && x.kind !== 'returned')
				.map((x) => x.recordedBy),
			...(stepKey
				? []
				: s.transitions
						.filter((t) => t.kind === 'started' || t.kind === 'executed')
						.map((t) => t.recordedBy))
		].filter((x): x is string => Boolean(x))
	);

/**
 * The technician signs a step Performed: an assigned, qualified technician; every required field
 * entered; every earlier step performed (SE11: the procedure's order).
 */
export async function performStep(
	user: User,
	id: string,
	stepKey: string,
	password: string,
	seen: number,
	clientAddress: string | null = null
) {
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	const found = s0.steps.find((x) => x.step.key === stepKey);
	if (!found) throw new RecordError('No such step in this procedure.', undefined, 404);
	await mustBeAssignedAndQualified(
		user,
		s0,
		'sign steps of this work order',
		siteToday(site.timeZone)
	);
	const check = (s: WorkOrderState) => {
		if (s.status !== 'in_progress')
			throw new RecordError(
				`This work order is ${workStatusLabels[s.status]}: steps are signed while it is in progress.`,
				undefined,
				409
			);
		const step = s.steps.find((x) => x.step.key === stepKey)!;
		if (step.status.revision !== seen)
			throw new RecordError(
				'This step changed since you opened it: check the values as they are now, then sign.',
				undefined,
				409
			);
		if (step.status.state === 'performed' || step.status.state === 'verified')
			throw new RecordError('This step is already signed Performed.', undefined, 409);
		if (step.status.state === 'not_started')
			throw new RecordError('Enter and save the step’s values before signing it.', undefined, 409);
		if (step.status.missing.length) {
			const labels = step.status.missing.map(
				(k) => step.step.fields.find((f) => f.key === k)!.label
			);
			throw new RecordError(`Still to enter: ${labels.join(', ')}.`, undefined, 409);
		}
		const earlier = s.steps.filter(
			(x) =>
				x.position < step.position &&
				x.status.state !== 'performed' &&
				x.status.state !== 'verified'
		);
		if (earlier.length)
			throw new RecordError(
				`Steps are signed in the procedure’s order: sign step ${earlier[0]!.position} (${earlier[0]!.step.title}) first.`,
				undefined,
				409
			);
	};
	check(s0);
	const record = stepRecord(s0, stepKey);
	await reauthenticate(user, password, { record, meaning: 'performed' }, clientAddress);
	return thenKick(
		db().transaction(async (tx) => {
			await lockWorkOrder(tx, id);
			const s = (await loadState(tx, id))!;
			check(s);
			stillAssigned(user, s);
			const signature = await recordSignature(
				tx,
				user,
				stepRecord(s, stepKey),
				'performed',
				clientAddress
			);
			const seq = await insertSignoff(
				tx,
				user,
				s,
				stepKey,
				'performed',
				signature,
				null,
				clientAddress
			);
			const step = s.steps.find((x) => x.step.key === stepKey)!;
			if (step.step.verificationRequired)
				await notifyVerificationWaiting(
					tx,
					workRef(s),
					{ key: stepKey, position: step.position, title: step.step.title },
					user.name,
					[user.id, ...hands(s, stepKey)],
					siteToday(site.timeZone),
					seq
				);
			return signature;
		})
	);
}

async function insertSignoff(
	tx: Transaction,
	user: User,
	s: WorkOrderState,
	stepKey: string,
	kind: 'performed' | 'verified' | 'returned',
	signature: { id: string; contentHash: string } | null,
	reason: string | null,
	clientAddress: string | null
) {
	const rec = await appendRecordEvent(tx, personOf(user), {
		action: `work_order.step_${kind}`,
		entityType: 'work_order',
		entityId: s.wo.id,
		newValues: {
			step: stepKey,
			signatureId: signature?.id ?? null,
			contentHash: signature?.contentHash ?? null
		},
		reason,
		clientAddress
	});
	await tx.insert(stepSignoffs).values({
		id: randomUUID(),
		workOrderId: s.wo.id,
		stepKey,
		kind,
		signatureId: signature?.id ?? null,
		reason,
		...rec
	});
	return rec.auditSeq;
}

/** What makes someone a possible verifier of a step: a qualified technician who had no hand in it (ES8). */
async function mustBeVerifier(
	user: User,
	s: WorkOrderState,
	stepKey: string,
	day: string,
	meaning: 'verified' | 'returned',
	clientAddress: string | null
) {
	const by = personOf(user);
	await mustHold(by, ['technician'], 'verify steps', { type: 'work_order', id: s.wo.id });
	const step = s.steps.find((x) => x.step.key === stepKey)!;
	if (!step.step.verificationRequired)
		throw new RecordError(
			'This step does not ask for a second-person verification.',
			undefined,
			409
		);
	const record = stepRecord(s, stepKey);
	const performer = step.status.performed?.recordedBy;
	const entered = s.entries.filter((e) => e.stepKey === stepKey).map((e) => e.recordedBy);
	if (performer === user.id || entered.includes(user.id))
		await refuseSignature(
			user,
			record,
			meaning === 'verified' ? 'verified' : 'returned',
			'verifier_is_performer',
			'You performed or entered this step: a second person must verify it.',
			clientAddress
		);
	if (!(await isQualified(user.id, s.wo.procedureId, day)))
		await refuse(
			by,
			`You are not currently qualified on ${s.wo.procedureCode}, so you cannot verify its steps.`,
			{ rule: 'qualified', what: 'verify steps' },
			{ type: 'work_order', id: s.wo.id }
		);
}

/** A second person signs a performed step Verified (ES8: not its performer; AC4: qualified). */
export async function verifyStep(
	user: User,
	id: string,
	stepKey: string,
	password: string,
	seen: number,
	clientAddress: string | null = null
) {
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	if (!s0.steps.some((x) => x.step.key === stepKey))
		throw new RecordError('No such step in this procedure.', undefined, 404);
	const check = (s: WorkOrderState) => {
		const step = s.steps.find((x) => x.step.key === stepKey)!;
		if (s.status !== 'in_progress')
			throw new RecordError(
				`This work order is ${workStatusLabels[s.status]}: steps are verified while it is in progress.`,
				undefined,
				409
			);
		if (step.status.state === 'verified')
			throw new RecordError('This step is already verified.', undefined, 409);
		if (step.status.state !== 'performed')
			throw new RecordError(
				'This step is not signed Performed yet: it is verified after it is performed.',
				undefined,
				409
			);
		if (step.status.revision !== seen)
			throw new RecordError(
				'This step changed since you opened it: check the values as they are now, then sign.',
				undefined,
				409
			);
	};
	await mustBeVerifier(user, s0, stepKey, siteToday(site.timeZone), 'verified', clientAddress);
	check(s0);
	const record = stepRecord(s0, stepKey);
	await reauthenticate(user, password, { record, meaning: 'verified' }, clientAddress);
	return db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = (await loadState(tx, id))!;
		check(s);
		const step = s.steps.find((x) => x.step.key === stepKey)!;
		if (
			step.status.performed?.recordedBy === user.id ||
			s.entries.some((e) => e.stepKey === stepKey && e.recordedBy === user.id)
		)
			throw new RecordError(
				'You performed or entered this step: a second person must verify it.',
				undefined,
				403
			);
		const signature = await recordSignature(
			tx,
			user,
			stepRecord(s, stepKey),
			'verified',
			clientAddress
		);
		await insertSignoff(tx, user, s, stepKey, 'verified', signature, null, clientAddress);
		return signature;
	});
}

/** The verifier returns a performed step to the performer with a reason (no signature is made). */
export async function returnStep(
	user: User,
	id: string,
	stepKey: string,
	reason: string,
	seen: number,
	clientAddress: string | null = null
) {
	needReason(reason);
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	if (!s0.steps.some((x) => x.step.key === stepKey))
		throw new RecordError('No such step in this procedure.', undefined, 404);
	await mustBeVerifier(user, s0, stepKey, siteToday(site.timeZone), 'returned', clientAddress);
	await db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = (await loadState(tx, id))!;
		const step = s.steps.find((x) => x.step.key === stepKey)!;
		if (s.status !== 'in_progress' || step.status.state !== 'performed')
			throw new RecordError(
				'Only a performed step waiting for verification can be returned.',
				undefined,
				409
			);
		if (step.status.revision !== seen)
			throw new RecordError('This step changed since you opened it.', undefined, 409);
		const seq = await insertSignoff(
			tx,
			user,
			s,
			stepKey,
			'returned',
			null,
			reason.trim(),
			clientAddress
		);
		const performer = step.status.performed?.recordedBy;
		await notifyReturned(
			tx,
			workRef(s),
			{ stepKey, stepPosition: step.position, reason: reason.trim(), by: user.name },
			performer ? [performer] : [],
			seq
		);
	});
	kickOutbox();
}

/** Every step done: the technician signs the work order Executed; the equipment awaits release. */
export async function completeExecution(
	user: User,
	id: string,
	password: string,
	seen: number,
	clientAddress: string | null = null
) {
	const site = await siteOrFail();
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	await mustBeAssignedAndQualified(
		user,
		s0,
		'sign this work order Executed',
		siteToday(site.timeZone)
	);
	const check = (s: WorkOrderState) => {
		if (s.status !== 'in_progress')
			throw new RecordError(`This work order is ${workStatusLabels[s.status]}.`, undefined, 409);
		mustBeUnchanged(s, seen);
		const open = s.steps.filter((x) => !stepDone(x.step, x.status));
		if (open.length)
			throw new RecordError(
				`Not every step is done: step ${open[0]!.position} (${open[0]!.step.title}) is ${open[0]!.status.state.replace('_', ' ')}${open[0]!.step.verificationRequired ? ' and needs verification' : ''}.`,
				undefined,
				409
			);
	};
	check(s0);
	await reauthenticate(
		user,
		password,
		{ record: workRecord(s0), meaning: 'executed' },
		clientAddress
	);
	return thenKick(
		db().transaction(async (tx) => {
			await lockWorkOrder(tx, id);
			const s = (await loadState(tx, id))!;
			check(s);
			stillAssigned(user, s);
			await lockEquipment(tx, s.wo.equipmentId);
			const signature = await recordSignature(tx, user, workRecord(s), 'executed', clientAddress);
			const seq = await transition(tx, user, s, 'executed', signature, null, clientAddress);
			await notifyReleaseWaiting(tx, workRef(s), user.name, [user.id, ...hands(s)], seq);
			await setStatus(
				tx,
				personOf(user),
				s.wo.equipmentId,
				'awaiting_release',
				`Work order ${s.wo.number} executed`,
				{ type: 'work_order', id },
				clientAddress
			);
			return signature;
		})
	);
}

async function transition(
	tx: Transaction,
	user: User,
	s: WorkOrderState,
	kind: TransitionKind,
	signature: { id: string; contentHash: string } | null,
	reason: string | null,
	clientAddress: string | null,
	more: Record<string, unknown> = {}
) {
	const rec = await appendRecordEvent(tx, personOf(user), {
		action: `work_order.${kind === 'trail_reviewed' ? 'trail_review' : kind === 'executed' ? 'execute' : kind === 'released' ? 'release' : 'return'}`,
		entityType: 'work_order',
		entityId: s.wo.id,
		newValues: {
			status: kind === 'trail_reviewed' ? s.status : kind === 'returned' ? 'in_progress' : kind,
			signatureId: signature?.id ?? null,
			contentHash: signature?.contentHash ?? null,
			...more
		},
		previousValues: { status: s.status },
		reason,
		clientAddress
	});
	await tx.insert(workOrderTransitions).values({
		id: randomUUID(),
		workOrderId: s.wo.id,
		kind,
		reason,
		signatureId: signature?.id ?? null,
		...rec
	});
	return rec.auditSeq;
}

// ── Quality ──────────────────────────────────────────────────────────────────

/** Whether a person had a hand in the work (what Quality's independence rules out). */
export const tookPart = (s: WorkOrderState, personId: string) => hands(s).has(personId);

const tookPartError = () =>
	new RecordError(
		'You took part in this work (started it, entered values, or signed steps or the execution): someone independent of the work must do this.',
		undefined,
		403
	);

/** Quality's independence from the work (ES8, AT6): no entry, no Performed or Verified signature on it. */
async function mustBeIndependent(
	user: User,
	s: WorkOrderState,
	record: SignedRecord,
	meaning: SignatureMeaning,
	what: string,
	clientAddress: string | null
) {
	await mustHold(personOf(user), ['quality'], what, { type: 'work_order', id: s.wo.id });
	if (hands(s).has(user.id))
		await refuseSignature(
			user,
			record,
			meaning,
			'reviewer_took_part',
			'You took part in this work (started it, entered values, or signed steps or the execution): someone independent of the work must do this.',
			clientAddress
		);
}

/** Quality records the review of the work order's audit trail (AT5) with a Reviewed signature. */
export async function reviewTrail(
	user: User,
	id: string,
	password: string,
	seen: number,
	clientAddress: string | null = null,
	/** The last audit event the reviewer was shown: a later one (even a refusal) means they have not seen it all. */
	seenThroughSeq?: number
) {
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	const unseenEvents = (events: { seq: number }[]) => {
		if (seenThroughSeq !== undefined && (events.at(-1)?.seq ?? 0) !== seenThroughSeq)
			throw new RecordError(
				'New events were added to this record’s audit trail since you opened it. The page now shows them: read them, then sign.',
				undefined,
				409
			);
	};
	const check = (s: WorkOrderState) => {
		if (s.status !== 'executed')
			throw new RecordError('The trail is reviewed once the work is executed.', undefined, 409);
		if (s.trailReview)
			throw new RecordError('The trail review is already recorded.', undefined, 409);
		mustBeUnchanged(s, seen);
	};
	const events0 = await trailOf(db(), s0);
	const record0 = trailSignedContent(s0.identity, events0);
	await mustBeIndependent(user, s0, record0, 'reviewed', 'review work orders', clientAddress);
	check(s0);
	unseenEvents(events0);
	await reauthenticate(user, password, { record: record0, meaning: 'reviewed' }, clientAddress);
	return db().transaction(async (tx) => {
		await lockWorkOrder(tx, id);
		const s = (await loadState(tx, id))!;
		check(s);
		if (hands(s).has(user.id)) throw tookPartError();
		const events = await trailOf(tx, s);
		unseenEvents(events);
		const record = trailSignedContent(s.identity, events);
		const signature = await recordSignature(tx, user, record, 'reviewed', clientAddress);
		await transition(tx, user, s, 'trail_reviewed', signature, null, clientAddress, {
			throughSeq: events.at(-1)?.seq ?? 0,
			events: events.length
		});
		return signature;
	});
}

/** Quality dispositions a deviation with a Reviewed signature over its words. */
export async function dispositionDeviation(
	user: User,
	workOrderId: string,
	deviationId: string,
	decision: DeviationDecision,
	text: string,
	password: string,
	seen: number,
	clientAddress: string | null = null
) {
	if (!text.trim())
		throw new RecordError('Write the disposition: what was decided and why.', 'text', 422);
	const s0 = await loadState(db(), workOrderId);
	const dev0 = s0?.deviations.find((d) => d.id === deviationId);
	if (!s0 || !dev0) throw new RecordError('No such deviation on this work order.', undefined, 404);
	const record0 = deviationRecord(s0, { ...dev0, decision, dispositionText: text.trim() });
	await mustBeIndependent(user, s0, record0, 'reviewed', 'disposition deviations', clientAddress);
	const check = (s: WorkOrderState, dev: typeof dev0) => {
		if (s.status !== 'executed')
			throw new RecordError(
				'Deviations are dispositioned once the work is executed, with the whole record.',
				undefined,
				409
			);
		if (dev.dispositionId)
			throw new RecordError('This deviation is already dispositioned.', undefined, 409);
		mustBeUnchanged(s, seen);
	};
	check(s0, dev0);
	await reauthenticate(user, password, { record: record0, meaning: 'reviewed' }, clientAddress);
	return db().transaction(async (tx) => {
		await lockWorkOrder(tx, workOrderId);
		const s = (await loadState(tx, workOrderId))!;
		const dev = s.deviations.find((d) => d.id === deviationId)!;
		check(s, dev);
		if (hands(s).has(user.id))
			throw new RecordError(
				'You took part in this work: someone independent of it must disposition the deviation.',
				undefined,
				403
			);
		const record = deviationRecord(s, { ...dev, decision, dispositionText: text.trim() });
		const signature = await recordSignature(tx, user, record, 'reviewed', clientAddress);
		const rec = await appendRecordEvent(tx, personOf(user), {
			action: 'deviation.disposition',
			entityType: 'work_order',
			entityId: s.wo.id,
			newValues: {
				deviationId,
				number: dev.number,
				decision,
				text: text.trim(),
				signatureId: signature.id
			},
			clientAddress
		});
		await tx.insert(deviationDispositions).values({
			id: randomUUID(),
			deviationId,
			decision,
			text: text.trim(),
			signatureId: signature.id,
			...rec
		});
		return signature;
	});
}

/** What still stops a release, in words (empty when it may be released). */
export function releaseBlockers(s: WorkOrderState): string[] {
	const out: string[] = [];
	if (s.status !== 'executed')
		out.push(`The work order is ${workStatusLabels[s.status]}, not Executed.`);
	const open = s.steps.filter((x) => !stepDone(x.step, x.status));
	for (const x of open)
		out.push(
			`Step ${x.position} (${x.step.title}) is ${x.status.state.replace('_', ' ')}${x.step.verificationRequired && x.status.state !== 'verified' ? ' and not verified' : ''}.`
		);
	for (const d of s.deviations.filter((d) => !d.dispositionId))
		out.push(`Deviation ${d.number} is open: disposition it first.`);
	if (s.status === 'executed' && !s.trailReview)
		out.push('The review of the record’s audit trail is not recorded yet.');
	return out;
}

/** Quality releases the equipment back to service (MR4): nothing open; the releaser took no part (ES8). */
export async function releaseWorkOrder(
	user: User,
	id: string,
	password: string,
	seen: number,
	clientAddress: string | null = null
) {
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	await mustBeIndependent(
		user,
		s0,
		workRecord(s0, true),
		'released',
		'release work orders',
		clientAddress
	);
	const check = (s: WorkOrderState) => {
		const blockers = releaseBlockers(s);
		if (blockers.length)
			throw new RecordError(`It cannot be released yet: ${blockers.join(' ')}`, undefined, 409);
		mustBeUnchanged(s, seen);
	};
	check(s0);
	await reauthenticate(
		user,
		password,
		{ record: workRecord(s0, true), meaning: 'released' },
		clientAddress
	);
	return thenKick(
		db().transaction(async (tx) => {
			await lockWorkOrder(tx, id);
			const s = (await loadState(tx, id))!;
			check(s);
			await lockEquipment(tx, s.wo.equipmentId);
			if (hands(s).has(user.id)) throw tookPartError();
			const signature = await recordSignature(
				tx,
				user,
				workRecord(s, true),
				'released',
				clientAddress
			);
			const seq = await transition(tx, user, s, 'released', signature, null, clientAddress);
			// The released PDF is rendered and stored after this commits, so no slow work holds the chain head.
			await enqueue(tx, { kind: 'released_record', payload: { workOrderId: id } }, seq);
			await setStatus(
				tx,
				personOf(user),
				s.wo.equipmentId,
				'in_service',
				`Released by Quality under work order ${s.wo.number}`,
				{ type: 'work_order', id },
				clientAddress
			);
			return signature;
		})
	);
}

/** Quality returns an executed record for correction with a reason: back to In progress, equipment Out of service. */
export async function returnWorkOrder(
	user: User,
	id: string,
	reason: string,
	password: string,
	seen: number,
	clientAddress: string | null = null
) {
	needReason(reason);
	const s0 = await loadState(db(), id);
	if (!s0) throw new RecordError('No such work order.', undefined, 404);
	await mustBeIndependent(
		user,
		s0,
		workRecord(s0),
		'returned',
		'return work orders',
		clientAddress
	);
	const check = (s: WorkOrderState) => {
		if (s.status !== 'executed')
			throw new RecordError('Only an executed work order can be returned.', undefined, 409);
		mustBeUnchanged(s, seen);
	};
	check(s0);
	await reauthenticate(
		user,
		password,
		{ record: workRecord(s0), meaning: 'returned' },
		clientAddress
	);
	return thenKick(
		db().transaction(async (tx) => {
			await lockWorkOrder(tx, id);
			const s = (await loadState(tx, id))!;
			check(s);
			await lockEquipment(tx, s.wo.equipmentId);
			if (hands(s).has(user.id)) throw tookPartError();
			const signature = await recordSignature(tx, user, workRecord(s), 'returned', clientAddress);
			const seq = await transition(
				tx,
				user,
				s,
				'returned',
				signature,
				reason.trim(),
				clientAddress
			);
			const executedBy = s.transitions.findLast((t) => t.kind === 'executed')?.recordedBy;
			await notifyReturned(
				tx,
				workRef(s),
				{ reason: reason.trim(), by: user.name },
				executedBy ? [executedBy] : [],
				seq
			);
			await setStatus(
				tx,
				personOf(user),
				s.wo.equipmentId,
				'out_of_service',
				`Work order ${s.wo.number} returned for correction`,
				{ type: 'work_order', id },
				clientAddress
			);
			return signature;
		})
	);
}

// ── Queues and traceability ──────────────────────────────────────────────────

export type QueueEntry = {
	id: string;
	title: string;
	detail: string;
	at?: string;
	workOrderId: string;
	stepKey?: string;
};

/** What waits for a person, by queue key (GET /api/v1/queues, the home page "Waiting for me"). */
export async function queuesFor(user: User) {
	const site = await siteOrFail();
	const today = siteToday(site.timeZone);
	const list = await listWorkOrders(site.id);
	const open = list.filter((w) => w.status === 'planned' || w.status === 'in_progress');
	const out: Record<string, QueueEntry[]> = {};
	const due = (w: (typeof list)[number]) =>
		`due ${w.dueOn}${w.overdue ? ' (overdue)' : ''} · ${workStatusLabels[w.status]}`;
	if (user.roles.includes('technician')) {
		out.perform = open
			.filter((w) => w.assignees.some((a) => a.id === user.id))
			.map((w) => ({
				id: w.id,
				workOrderId: w.id,
				title: `${w.number} · ${w.tag} · ${w.procedureCode}`,
				detail: due(w)
			}));
		out.verify = [];
		const qualifiedOn = new Map<string, boolean>();
		for (const w of list.filter((x) => x.status === 'in_progress')) {
			const s = (await loadState(db(), w.id))!;
			const waiting = s.steps.filter(
				(x) => x.step.verificationRequired && x.status.state === 'performed'
			);
			if (!waiting.length) continue;
			if (!qualifiedOn.has(s.wo.procedureId))
				qualifiedOn.set(s.wo.procedureId, await isQualified(user.id, s.wo.procedureId, today));
			if (!qualifiedOn.get(s.wo.procedureId)) continue;
			for (const x of waiting) {
				const mine =
					x.status.performed?.recordedBy === user.id ||
					s.entries.some((e) => e.stepKey === x.step.key && e.recordedBy === user.id);
				if (mine) continue;
				out.verify.push({
					id: `${w.id}:${x.step.key}`,
					workOrderId: w.id,
					stepKey: x.step.key,
					title: `${w.number} · ${w.tag} · step ${x.position}: ${x.step.title}`,
					detail: `performed by ${x.status.performed!.recordedByName}`,
					at: x.status.performed!.recordedAt
				});
			}
		}
	}
	if (user.roles.includes('planner')) {
		out.plan = open
			.filter((w) => w.status === 'planned' && (!w.assignees.length || w.overdue))
			.map((w) => ({
				id: w.id,
				workOrderId: w.id,
				title: `${w.number} · ${w.tag} · ${w.procedureCode}`,
				detail: w.assignees.length ? due(w) : `nobody assigned · ${due(w)}`
			}));
	}
	if (user.roles.includes('quality')) {
		out.review = list
			.filter((w) => w.status === 'executed')
			.map((w) => ({
				id: w.id,
				workOrderId: w.id,
				title: `${w.number} · ${w.tag} · ${w.procedureCode}`,
				detail: w.openDeviations
					? `executed · ${w.openDeviations} open deviation${w.openDeviations === 1 ? '' : 's'}`
					: 'executed'
			}));
		const rows = await db()
			.select({
				id: deviations.id,
				number: deviations.number,
				workOrderId: deviations.workOrderId,
				woNumber: workOrders.number,
				description: deviations.description,
				at: deviations.recordedAt
			})
			.from(deviations)
			.innerJoin(workOrders, eq(workOrders.id, deviations.workOrderId))
			.leftJoin(deviationDispositions, eq(deviationDispositions.deviationId, deviations.id))
			.where(and(eq(workOrders.siteId, site.id), sql`${deviationDispositions.id} is null`))
			.orderBy(asc(deviations.auditSeq));
		out.deviations = rows.map((d) => ({
			id: d.id,
			workOrderId: d.workOrderId,
			title: `${d.number} · ${d.woNumber}`,
			detail: d.description,
			at: iso(d.at)
		}));
	}
	return out;
}

/** Every work order and step that used an instrument (for when it is later found out of tolerance). */
export async function usesOfInstrument(instrumentId: string) {
	return db()
		.select({
			entryId: stepEntries.id,
			workOrderId: stepEntries.workOrderId,
			number: workOrders.number,
			tag: equipment.tag,
			stepKey: stepEntries.stepKey,
			performedAt: stepEntries.performedAt,
			calibrationDueOn: stepEntries.calibrationDueOn,
			by: stepEntries.recordedByName,
			corrected: sql<boolean>`exists (select 1 from step_entries c where c.corrects = ${stepEntries.id})`
		})
		.from(stepEntries)
		.innerJoin(workOrders, eq(workOrders.id, stepEntries.workOrderId))
		.innerJoin(equipment, eq(equipment.id, workOrders.equipmentId))
		.where(eq(stepEntries.instrumentId, instrumentId))
		.orderBy(desc(stepEntries.performedAt));
}

/** Every equipment a lot was fitted to, through the work orders that recorded it. */
export async function fittingsOfLot(lotIds: string[]) {
	if (!lotIds.length) return [];
	return db()
		.select({
			lotId: stepEntries.lotId,
			workOrderId: stepEntries.workOrderId,
			number: workOrders.number,
			equipmentId: equipment.id,
			tag: equipment.tag,
			performedAt: stepEntries.performedAt,
			by: stepEntries.recordedByName,
			corrected: sql<boolean>`exists (select 1 from step_entries c where c.corrects = ${stepEntries.id})`
		})
		.from(stepEntries)
		.innerJoin(workOrders, eq(workOrders.id, stepEntries.workOrderId))
		.innerJoin(equipment, eq(equipment.id, workOrders.equipmentId))
		.where(inArray(stepEntries.lotId, lotIds))
		.orderBy(desc(stepEntries.performedAt));
}

/** The work orders of one piece of equipment, newest first (its log, MR2). */
export async function workOrdersOfEquipment(equipmentId: string) {
	const site = await siteOrFail();
	return listWorkOrders(site.id, { equipmentId });
}

export { signaturesOf };
