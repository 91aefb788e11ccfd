import canonicalize from 'canonicalize';
import { formulas } from './calc/formulas';
import { testUncertaintyRatio } from './calc/tur';
import { convert, quantityOf, unitsOf } from './calc/units';
import { hasLimits, type ProcedureField, type ProcedureStep } from './schemas/procedure';

/**
 * Work orders (5/10): their words, and the rules both sides share — how a raw entry becomes a
 * typed value with its result against the limits, how a step's state and a work order's status
 * follow from their append-only rows, and the canonical content each signature binds to (ES3).
 * Pure functions: tested in work.spec.ts, used by the server to decide and the browser to show.
 */

export const workKinds = ['preventive', 'corrective', 'follow_up'] as const;
export type WorkKind = (typeof workKinds)[number];
export const workKindLabels: Record<WorkKind, string> = {
	preventive: 'Preventive',
	corrective: 'Corrective',
	follow_up: 'Follow-up'
};

export const priorities = ['routine', 'high', 'urgent'] as const;
export type Priority = (typeof priorities)[number];
export const priorityLabels: Record<Priority, string> = {
	routine: 'Routine',
	high: 'High',
	urgent: 'Urgent'
};

export const workStatuses = [
	'planned',
	'in_progress',
	'executed',
	'released',
	'cancelled'
] as const;
export type WorkStatus = (typeof workStatuses)[number];
export const workStatusLabels: Record<WorkStatus, string> = {
	planned: 'Planned',
	in_progress: 'In progress',
	executed: 'Executed',
	released: 'Released',
	cancelled: 'Cancelled'
};

/** What a transition row records; the status follows from the newest one that changes it. */
export const transitionKinds = [
	'planned',
	'started',
	'executed',
	'trail_reviewed',
	'released',
	'returned',
	'cancelled'
] as const;
export type TransitionKind = (typeof transitionKinds)[number];
export const statusAfter: Record<TransitionKind, WorkStatus | null> = {
	planned: 'planned',
	started: 'in_progress',
	executed: 'executed',
	trail_reviewed: null,
	released: 'released',
	returned: 'in_progress',
	cancelled: 'cancelled'
};

export function statusOf(transitions: readonly { kind: TransitionKind }[]): WorkStatus {
	let status: WorkStatus = 'planned';
	for (const t of transitions) status = statusAfter[t.kind] ?? status;
	return status;
}

export const stepStates = ['not_started', 'entered', 'performed', 'verified', 'returned'] as const;
export type StepState = (typeof stepStates)[number];
export const stepStateLabels: Record<StepState, string> = {
	not_started: 'Not started',
	entered: 'Entered',
	performed: 'Performed',
	verified: 'Verified',
	returned: 'Returned'
};

// ── Entries ──────────────────────────────────────────────────────────────────

/** A tightening pass as the record keeps it: which, its target, and when it was ticked (server time). */
export type PassRecord = {
	pass: number;
	name: string;
	targetTorque: number | null;
	unit: string;
	at: string;
	by: string;
};

/** A photo as an entry and a signature name it: its evidence row and what was checked. */
export type PhotoRef = {
	evidenceId: string;
	sha256: string;
	mediaType: string;
	width: number;
	height: number;
	size: number;
};

/** A photo attached to a work order, as the record shows it (voided ones stay, marked). */
export type EvidenceRow = {
	id: string;
	stepKey: string | null;
	fieldKey: string | null;
	deviationId: string | null;
	sha256: string;
	size: number;
	mediaType: string;
	width: number;
	height: number;
	thumbSha256: string;
	note: string | null;
	recordedBy: string | null;
	recordedByName: string;
	recordedAt: string;
	auditSeq: number;
	voidId: string | null;
	voidReason: string | null;
	voidedByName: string | null;
	voidedAt: string | null;
};

/** What a calculated field stored: the result, its formula and the entries it was computed from. */
export type CalculatedValue = {
	calculated: number;
	unit: string;
	formula: keyof typeof formulas;
	expression: string;
	inputs: {
		field: string;
		label: string;
		symbol: string;
		entryId: string;
		number: number;
		unit: string;
	}[];
	/** Compression: under / within / over the equipment's band; null where the field's limits decide. */
	judgement: 'under' | 'within' | 'over' | null;
	band: { min: number; max: number } | null;
};

/** What a tightening field stored once every pass was ticked: the passes, final torque and wrench. */
export type TighteningValue = {
	tightening: {
		pattern: 'full' | 'check';
		fasteners: number;
		sequence: number[];
		round: number;
		passes: PassRecord[];
	};
	finalTorque: { number: number; unit: string };
	/** The valve's final torque (N·m, manufacturer's figure) the wrench was to be set to. */
	targetTorque?: number | null;
	wrench: { instrumentId: string; code: string; kind: string; calibrationDueOn: string };
};

/** A stored value, by field kind. Lots and instruments carry what was checked at entry. */
export type EntryValue =
	| { number: number; unit?: string }
	| { text: string }
	| { pass: boolean }
	| { choice: string }
	| {
			lotId: string;
			partNumber: string;
			supplierLot: string;
			materialCode: string;
			expiresOn: string | null;
	  }
	| {
			instrumentId: string;
			code: string;
			kind: string;
			calibrationDueOn: string;
			/** The test uncertainty ratio for each field of the step it measures (Z540.3). */
			tur?: { field: string; ratio: number }[];
	  }
	| CalculatedValue
	| TighteningValue
	/** A photo field: the evidence row of the photo (7/10). */
	| { photo: PhotoRef }
	/** Tightening as 5/10 recorded it, before the guided passes. */
	| { completed: boolean };

/** Kinds a technician enters on the Execute screen in this release (photos arrive with 7/10). */
export const enterable = (f: Pick<ProcedureField, 'kind'>) =>
	f.kind !== 'photo' && f.kind !== 'calculated';

export type Parsed =
	| { ok: true; value: EntryValue | { lotId: string } | { instrumentId: string } }
	| { ok: false; message: string };

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * The units a number can be entered in: the procedure's own first, then the others of its
 * quantity (NIST SP 811 factors, src/lib/calc/units.ts). A unit the library does not know is
 * the only choice.
 */
export function entryUnits(unit: string): string[] {
	const q = quantityOf(unit);
	return q ? [unit, ...unitsOf(q).filter((u) => u !== unit)] : [unit];
}

/** A number typed on the shop floor: a decimal comma is accepted where it is the only separator. */
export function parseNumber(raw: string) {
	const text = raw.trim();
	const normal = text.includes('.') ? text : text.replace(',', '.');
	if (!/^[-+]?\d+(\.\d+)?$/.test(normal)) return null;
	const number = Number(normal);
	if (!Number.isFinite(number) || Math.abs(number) > 1e12) return null;
	return { number, decimals: normal.split('.')[1]?.length ?? 0 };
}

/**
 * A raw form value for a field → its typed value (lots and instruments as ids, resolved and
 * checked by the server). An empty string is "not entered" and gives null. A number may be
 * entered in another unit of its quantity (`unit`); it is stored with that unit.
 */
export function parseEntry(field: ProcedureField, raw: string, unit = ''): Parsed | null {
	const text = raw.trim();
	if (!text) return null;
	switch (field.kind) {
		case 'number': {
			const entered = unit.trim() || field.unit;
			if (!entryUnits(field.unit).includes(entered))
				return { ok: false, message: `Choose a unit that converts to ${field.unit}.` };
			const normal = text.includes('.') ? text : text.replace(',', '.');
			if (!/^[-+]?\d+(\.\d+)?$/.test(normal))
				return { ok: false, message: `Enter a number in ${entered}.` };
			const decimals = normal.split('.')[1]?.length ?? 0;
			// In another unit the procedure's decimals do not apply; the value is judged as shown in its unit.
			if (entered !== field.unit && decimals > 6)
				return { ok: false, message: 'Enter at most 6 decimals.' };
			if (entered === field.unit && decimals > field.decimals)
				return {
					ok: false,
					message:
						field.decimals === 0
							? 'Enter a whole number: the procedure records no decimals.'
							: `Enter at most ${field.decimals} decimal${field.decimals === 1 ? '' : 's'}, as the procedure records.`
				};
			const number = Number(normal);
			if (!Number.isFinite(number) || Math.abs(number) > 1e12)
				return { ok: false, message: 'That number is out of any measurable range.' };
			return { ok: true, value: { number, unit: entered } };
		}
		case 'text':
			if (text.length > 2000) return { ok: false, message: 'Keep it under 2000 characters.' };
			if (text.includes('\u0000') || !text.isWellFormed())
				return {
					ok: false,
					message: 'Use plain text: this has characters the record cannot keep.'
				};
			return { ok: true, value: { text } };
		case 'pass_fail':
			if (text !== 'pass' && text !== 'fail') return { ok: false, message: 'Choose pass or fail.' };
			return { ok: true, value: { pass: text === 'pass' } };
		case 'choice':
			if (!field.options.includes(text))
				return { ok: false, message: 'Choose one of the options.' };
			return { ok: true, value: { choice: text } };
		case 'part_lot':
			if (!uuidPattern.test(text)) return { ok: false, message: 'Choose the lot from the list.' };
			return { ok: true, value: { lotId: text.toLowerCase() } };
		case 'instrument':
			if (!uuidPattern.test(text))
				return { ok: false, message: 'Choose the instrument from the list.' };
			return { ok: true, value: { instrumentId: text.toLowerCase() } };
		default:
			return { ok: false, message: 'This field is not entered by hand.' };
	}
}

/**
 * A number or calculated value in the procedure's unit, rounded to the field's decimals: what is
 * shown and judged (the rounding method of ASTM E29, from memory). Null if it cannot convert.
 */
export function inFieldUnit(
	field: Pick<ProcedureField, 'unit' | 'decimals'>,
	value: EntryValue
): number | null {
	let n: number;
	if ('number' in value) {
		const c =
			value.unit && value.unit !== field.unit
				? convert(value.number, value.unit, field.unit)
				: { ok: true as const, value: value.number };
		if (!c.ok) return null;
		n = c.value;
	} else if ('calculated' in value) n = value.calculated;
	else return null;
	const shown = Number(n.toFixed(field.decimals));
	return Number.isFinite(shown) ? shown : null;
}

/**
 * Whether a value meets the field's limits: true, false (outside: a deviation), or null where
 * the field has none. Limits are inclusive. A failed pass/fail check is outside its limits; a
 * compression outside the valve's band is outside.
 */
export function withinLimits(field: ProcedureField, value: EntryValue): boolean | null {
	if ('calculated' in value && value.judgement) return value.judgement === 'within';
	if (('number' in value || 'calculated' in value) && hasLimits(field)) {
		const n = inFieldUnit(field, value);
		if (n === null) return false;
		if (field.limitType === 'range')
			return (field.min === null || n >= field.min) && (field.max === null || n <= field.max);
		if (field.limitType === 'target' && field.target !== null && field.tolerance !== null) {
			// Compared at the field's decimals, so 10.0 ± 0.5 takes 10.5 whatever binary floats do.
			const scale = 10 ** Math.max(field.decimals, 6);
			const off = Math.round(Math.abs(n - field.target) * scale);
			return off <= Math.round(field.tolerance * scale);
		}
		return null;
	}
	if ('pass' in value) return value.pass;
	if ('completed' in value) return value.completed;
	if ('tightening' in value) {
		// The wrench is set to the valve's final torque: judged in N·m at one decimal, as shown.
		if (value.targetTorque == null) return null;
		const c = convert(value.finalTorque.number, value.finalTorque.unit, 'N·m');
		if (!c.ok) return false;
		return Number(c.value.toFixed(1)) === Number(value.targetTorque.toFixed(1));
	}
	return null;
}

/**
 * Whether a new value is the one already saved: a number without a stored unit is in the
 * procedure's unit (entries saved before 6/10), and an instrument's TUR is derived, not entered.
 */
export function sameValue(field: Pick<ProcedureField, 'unit'>, a: EntryValue, b: EntryValue) {
	const normal = (v: EntryValue): unknown => {
		if ('number' in v) return { number: v.number, unit: v.unit ?? field.unit };
		if ('instrumentId' in v && 'code' in v) {
			const { tur: _tur, ...rest } = v;
			void _tur;
			return rest;
		}
		return v;
	};
	return canonicalize(normal(a)) === canonicalize(normal(b));
}

const fixed = (n: number, decimals: number) => n.toFixed(decimals);

/** A value in words, with its unit: what the record, the verifier and the signature show. */
export function valueText(
	field: Pick<ProcedureField, 'kind' | 'unit' | 'decimals'>,
	value: EntryValue
) {
	if ('number' in value) {
		if (!value.unit || value.unit === field.unit)
			return `${fixed(value.number, field.decimals)} ${field.unit}`.trim();
		const shown = inFieldUnit(field, value);
		return `${shown === null ? '?' : fixed(shown, field.decimals)} ${field.unit} (entered as ${value.number} ${value.unit})`;
	}
	if ('calculated' in value) {
		const inputs = value.inputs.map((i) => `${i.symbol} = ${i.number} ${i.unit}`).join(', ');
		const band = value.band
			? `; ${value.judgement === 'within' ? 'within' : value.judgement === 'under' ? 'under' : 'over'} the band ${value.band.min}–${value.band.max} %`
			: '';
		return `${fixed(value.calculated, field.decimals)} ${value.unit} (${value.expression}, ${inputs}${band})`;
	}
	if ('photo' in value)
		return `Photo ${value.photo.width} × ${value.photo.height} px, SHA-256 ${value.photo.sha256.slice(0, 16)}…`;
	if ('tightening' in value) {
		const t = value.tightening;
		return `${t.passes.length} ${t.passes.length === 1 ? 'pass' : 'passes'} on ${t.fasteners} fasteners, final torque ${value.finalTorque.number} ${value.finalTorque.unit} with ${value.wrench.code} (calibration due ${value.wrench.calibrationDueOn})`;
	}
	if ('text' in value) return value.text;
	if ('pass' in value) return value.pass ? 'Pass' : 'Fail';
	if ('choice' in value) return value.choice;
	if ('completed' in value) return 'Passes completed';
	if ('lotId' in value)
		return `${value.partNumber} lot ${value.supplierLot} (${value.materialCode}${value.expiresOn ? `, expires ${value.expiresOn}` : ''})`;
	return `${value.code} (${value.kind}, calibration due ${value.calibrationDueOn})`;
}

/** The raw form text that gives back a stored value (to prefill a correction). */
export function rawOf(value: EntryValue): string {
	if ('number' in value) return String(value.number);
	if ('calculated' in value) return String(value.calculated);
	if ('photo' in value) return value.photo.evidenceId;
	if ('tightening' in value) return String(value.finalTorque.number);
	if ('text' in value) return value.text;
	if ('pass' in value) return value.pass ? 'pass' : 'fail';
	if ('choice' in value) return value.choice;
	if ('completed' in value) return 'completed';
	if ('lotId' in value) return value.lotId;
	return value.instrumentId;
}

// ── Steps: state from the rows ───────────────────────────────────────────────

export type EntryRow = {
	id: string;
	stepKey: string;
	fieldKey: string;
	value: EntryValue;
	withinLimits: boolean | null;
	performedAt: string;
	lateReason: string | null;
	corrects: string | null;
	reason: string | null;
	recordedBy: string | null;
	recordedByName: string;
	recordedAt: string;
	auditSeq: number;
};
export type SignoffRow = {
	id: string;
	stepKey: string;
	kind: 'performed' | 'verified' | 'returned';
	signatureId: string | null;
	reason: string | null;
	recordedBy: string | null;
	recordedByName: string;
	recordedAt: string;
	auditSeq: number;
};

/** The entries in force: every entry no later entry corrects, in the procedure's field order. */
export function currentEntries(step: ProcedureStep, entries: readonly EntryRow[]) {
	const corrected = new Set(entries.map((e) => e.corrects).filter(Boolean));
	const mine = entries.filter((e) => e.stepKey === step.key && !corrected.has(e.id));
	return step.fields
		.map((f) => mine.find((e) => e.fieldKey === f.key))
		.filter((e): e is EntryRow => Boolean(e));
}

export type StepStatus = {
	state: StepState;
	/** The signoff that gives the state (performed, verified or returned), if any. */
	performed: SignoffRow | null;
	verified: SignoffRow | null;
	returned: SignoffRow | null;
	/** Required fields (that can be entered) still without a value. */
	missing: string[];
	/** Some value in force is outside its limits. */
	outside: boolean;
	/** Rows on this step: the expected version a save or a signature must name (item 9). */
	revision: number;
};

/**
 * A step's state from its rows: a signoff counts only when nothing was entered after it, so a
 * correction after signing sends the step back to Entered and the old signature stops matching.
 */
export function stepStatus(
	step: ProcedureStep,
	entries: readonly EntryRow[],
	signoffs: readonly SignoffRow[],
	passes: readonly PassRow[] = []
): StepStatus {
	const mineEntries = entries.filter((e) => e.stepKey === step.key);
	const mineSignoffs = signoffs.filter((s) => s.stepKey === step.key);
	const current = currentEntries(step, entries);
	const lastEntry = Math.max(0, ...mineEntries.map((e) => e.auditSeq));
	const after = mineSignoffs
		.filter((s) => s.auditSeq > lastEntry)
		.sort((a, b) => a.auditSeq - b.auditSeq);
	let performed: SignoffRow | null = null;
	let verified: SignoffRow | null = null;
	let returned: SignoffRow | null = null;
	for (const s of after) {
		if (s.kind === 'performed') [performed, verified, returned] = [s, null, null];
		else if (s.kind === 'verified' && performed) verified = s;
		else if (s.kind === 'returned') [performed, verified, returned] = [null, null, s];
	}
	const state: StepState = verified
		? 'verified'
		: performed
			? 'performed'
			: returned
				? 'returned'
				: mineEntries.length
					? 'entered'
					: 'not_started';
	// A required photo counts as missing until photo evidence arrives (7/10): such a step cannot be signed.
	// A tightening whose passes were started again after its entry was saved is missing until saved again.
	const inForce = (f: ProcedureField) => {
		const e = current.find((x) => x.fieldKey === f.key);
		if (!e) return false;
		if (f.kind !== 'tightening' || !('tightening' in e.value)) return true;
		return e.value.tightening.round === passProgress(passes, step.key, f.key).round;
	};
	const missing = step.fields
		.filter((f) => f.required && f.kind !== 'calculated' && !inForce(f))
		.map((f) => f.key);
	return {
		state,
		performed,
		verified,
		returned,
		missing,
		outside: current.some((e) => e.withinLimits === false),
		revision:
			mineEntries.length + mineSignoffs.length + passes.filter((p) => p.stepKey === step.key).length
	};
}

/** Done as far as the procedure asks: performed, and verified where verification is required. */
export const stepDone = (step: ProcedureStep, s: StepStatus) =>
	step.verificationRequired
		? s.state === 'verified'
		: s.state === 'performed' || s.state === 'verified';

// ── What signatures bind to (ES3) ────────────────────────────────────────────

export type WorkOrderIdentity = {
	id: string;
	number: string;
	equipmentTag: string;
	procedureCode: string;
	procedureVersion: number;
};

export const STEP_RECORD = 'work_order_step';
export const WORK_ORDER_RECORD = 'work_order';
export const RELEASE_RECORD = 'work_order_release';
export const TRAIL_RECORD = 'work_order_trail';
export const DEVIATION_RECORD = 'deviation';

/**
 * The content a Performed or Verified signature binds to: the work order, the step, and every
 * value in force with its unit, result and times. Any correction changes it.
 */
export function stepSignedContent(
	wo: WorkOrderIdentity,
	step: ProcedureStep,
	position: number,
	entries: readonly EntryRow[],
	photos: readonly Pick<
		EvidenceRow,
		'id' | 'stepKey' | 'fieldKey' | 'deviationId' | 'sha256' | 'voidId'
	>[] = []
) {
	// The step's own photos (not a photo field's: that is an entry; not a deviation's) bind to the
	// signature too, by hash. Only when there are any, so that a step without them hashes as before.
	const attached = photos
		.filter((p) => p.stepKey === step.key && !p.fieldKey && !p.deviationId)
		.map((p) => ({ evidenceId: p.id, sha256: p.sha256, voided: Boolean(p.voidId) }))
		.sort((a, b) => a.evidenceId.localeCompare(b.evidenceId));
	return {
		type: STEP_RECORD,
		id: `${wo.id}:${step.key}`,
		content: {
			...(attached.length ? { photos: attached } : {}),
			workOrder: wo.number,
			equipment: wo.equipmentTag,
			procedure: { code: wo.procedureCode, version: wo.procedureVersion },
			step: { key: step.key, position, title: step.title },
			entries: currentEntries(step, entries).map((e) => {
				const field = step.fields.find((f) => f.key === e.fieldKey)!;
				return {
					entryId: e.id,
					field: e.fieldKey,
					label: field.label,
					value: e.value,
					text: valueText(field, e.value),
					withinLimits: e.withinLimits,
					performedAt: e.performedAt,
					lateReason: e.lateReason,
					correctionReason: e.reason,
					recordedBy: e.recordedBy
				};
			})
		}
	};
}

/**
 * The content an Executed (or Returned) signature binds to: every step's values in force and its
 * signatures, and the deviations raised. With `release` (the trail review's signature), the
 * content a Released signature binds to: the same, plus each deviation's disposition and the
 * trail review — so Quality's later work never breaks the technician's Executed signature.
 */
export function workOrderSignedContent(
	wo: WorkOrderIdentity,
	steps: readonly ProcedureStep[],
	entries: readonly EntryRow[],
	signoffs: readonly SignoffRow[],
	deviations: readonly { number: string; dispositionSignatureId: string | null }[],
	release?: { trailReviewSignatureId: string | null; executedSignatureId: string | null }
) {
	const execution = {
		number: wo.number,
		equipment: wo.equipmentTag,
		procedure: { code: wo.procedureCode, version: wo.procedureVersion },
		steps: steps.map((step) => {
			const s = stepStatus(step, entries, signoffs);
			return {
				key: step.key,
				state: s.state,
				entries: currentEntries(step, entries).map((e) => e.id),
				performed: s.performed?.signatureId ?? null,
				verified: s.verified?.signatureId ?? null
			};
		}),
		deviations: deviations.map((d) => d.number)
	};
	if (!release) return { type: WORK_ORDER_RECORD, id: wo.id, content: execution };
	return {
		type: RELEASE_RECORD,
		id: wo.id,
		content: {
			...execution,
			deviations: deviations.map((d) => ({
				number: d.number,
				disposition: d.dispositionSignatureId
			})),
			executed: release.executedSignatureId,
			trailReview: release.trailReviewSignatureId
		}
	};
}

/** The content of a trail review: the work order's audit events as reviewed (seq and hash each). */
export function trailSignedContent(
	wo: WorkOrderIdentity,
	events: readonly { seq: number; hash: string }[]
) {
	return {
		type: TRAIL_RECORD,
		id: wo.id,
		content: { number: wo.number, events: events.map((e) => ({ seq: e.seq, hash: e.hash })) }
	};
}

export const deviationDecisions = ['accepted', 'corrected', 'capa'] as const;
export type DeviationDecision = (typeof deviationDecisions)[number];
export const deviationDecisionLabels: Record<DeviationDecision, string> = {
	accepted: 'No impact: accepted as recorded',
	corrected: 'Corrected within this work order',
	capa: 'Impact possible: CAPA opened'
};

export function deviationSignedContent(d: {
	id: string;
	number: string;
	workOrder: string;
	stepKey: string;
	fieldKey: string;
	description: string;
	entryId: string;
	/** The value and limits Quality judged, in words. */
	value: string;
	limits: string;
	decision: DeviationDecision;
	text: string;
}) {
	return {
		type: DEVIATION_RECORD,
		id: d.id,
		content: {
			number: d.number,
			workOrder: d.workOrder,
			step: d.stepKey,
			field: d.fieldKey,
			entryId: d.entryId,
			value: d.value,
			limits: d.limits,
			description: d.description,
			disposition: { decision: d.decision, text: d.text }
		}
	};
}

/** DI1: a performed-at further back than this needs a reason (a late entry). */
export const LATE_ENTRY_MINUTES = 15;

// ── Guided tightening (6/10) ─────────────────────────────────────────────────

export type PassRow = {
	id: string;
	stepKey: string;
	fieldKey: string;
	round: number;
	/** 1…n a pass ticked; 0 a restart of the passes (with its reason). */
	pass: number;
	name: string;
	targetTorque: number | null;
	unit: string;
	reason: string | null;
	recordedBy: string | null;
	recordedByName: string;
	recordedAt: string;
	auditSeq: number;
};

/** The passes of the current round of one tightening field, in order, and the number of the next. */
export function passProgress(rows: readonly PassRow[], stepKey: string, fieldKey: string) {
	const mine = rows.filter((r) => r.stepKey === stepKey && r.fieldKey === fieldKey);
	const round = Math.max(1, ...mine.map((r) => r.round));
	const done = mine.filter((r) => r.round === round && r.pass >= 1).sort((a, b) => a.pass - b.pass);
	return {
		round,
		done,
		next: done.length + 1,
		restarts: mine.filter((r) => r.pass === 0)
	};
}

/** A number field's two-sided tolerance (range with both ends, or target ± tolerance), in its unit. */
export function toleranceOf(f: ProcedureField): { lower: number; upper: number } | null {
	if (f.kind !== 'number') return null;
	if (f.limitType === 'range' && f.min !== null && f.max !== null)
		return { lower: f.min, upper: f.max };
	if (f.limitType === 'target' && f.target !== null && f.tolerance !== null)
		return { lower: f.target - f.tolerance, upper: f.target + f.tolerance };
	return null;
}

/** A diaphragm valve's compression band from its data, or null where it has none. */
export function bandOf(attributes: Record<string, unknown>): { min: number; max: number } | null {
	const min = attributes.compressionMinPercent;
	const max = attributes.compressionMaxPercent;
	return typeof min === 'number' && typeof max === 'number' && min < max ? { min, max } : null;
}

/**
 * The test uncertainty ratio (ANSI/NCSL Z540.3) of an instrument for each number field of the
 * step it can measure: a two-sided tolerance in a unit that converts to the instrument's.
 */
export function turOf(
	fields: readonly ProcedureField[],
	instrument: { unit: string; uncertaintyU95: number }
) {
	const out: { field: string; ratio: number }[] = [];
	for (const f of fields) {
		const b = toleranceOf(f);
		if (!b) continue;
		const lower = convert(b.lower, f.unit, instrument.unit);
		const upper = convert(b.upper, f.unit, instrument.unit);
		if (!lower.ok || !upper.ok) continue;
		const r = testUncertaintyRatio({
			lower: lower.value,
			upper: upper.value,
			u95: instrument.uncertaintyU95
		});
		if (r.ok) out.push({ field: f.key, ratio: Number(r.value.ratio.toFixed(2)) });
	}
	return out;
}

// ── Deviations of SIP cycles (9/10) ──────────────────────────────────────────

export const SIP_DEVIATION_RECORD = 'sip_deviation';

/** What Quality's disposition of an off-steam SIP cycle signs: the cycle as reported, the check, the decision. */
export function sipDeviationSignedContent(d: {
	id: string;
	number: string;
	equipment: string;
	description: string;
	cycle: {
		id: string;
		startedAt: string;
		endedAt: string;
		peakTemperatureC: number;
		absolutePressureBar: number;
		holdMinutes: number;
		saturationTemperatureC: number;
		toleranceC: number;
	};
	decision: DeviationDecision;
	text: string;
}) {
	return {
		type: SIP_DEVIATION_RECORD,
		id: d.id,
		content: {
			number: d.number,
			equipment: d.equipment,
			description: d.description,
			cycle: d.cycle,
			disposition: { decision: d.decision, text: d.text }
		}
	};
}
