import { describe, expect, it } from 'vitest';
import {
	blankField,
	blankStep,
	type ProcedureField,
	type ProcedureStep
} from './schemas/procedure';
import {
	currentEntries,
	sameValue,
	entryUnits,
	inFieldUnit,
	parseEntry,
	rawOf,
	RELEASE_RECORD,
	STEP_RECORD,
	statusOf,
	stepDone,
	stepSignedContent,
	stepStatus,
	valueText,
	withinLimits,
	WORK_ORDER_RECORD,
	workOrderSignedContent,
	type EntryRow,
	type EntryValue,
	type SignoffRow,
	type TransitionKind,
	type WorkOrderIdentity
} from './work';

// The pure rules of work orders (issue 5/10): entries, limits, states, and what each signature
// binds to (REQUIREMENTS DI3, ES3, ES8). The values are invented test data.

const field = (key: string, kind: ProcedureField['kind'], more: Partial<ProcedureField> = {}) => ({
	...blankField(key, kind),
	label: key,
	...more
});
const number = (more: Partial<ProcedureField> = {}) =>
	field('n', 'number', { unit: 'mm', decimals: 1, ...more });

const uuid = '0b6c2f3e-4d5a-4b6c-8d7e-9f0a1b2c3d4e';

describe('parseEntry: a raw form value → its typed value', () => {
	it('treats an empty or blank value as not entered', () => {
		expect(parseEntry(number(), '')).toBeNull();
		expect(parseEntry(number(), '   ')).toBeNull();
		expect(parseEntry(field('t', 'text'), '\t')).toBeNull();
	});

	it('reads numbers with a decimal point, trims, takes a sign', () => {
		expect(parseEntry(number(), '12.5')).toEqual({ ok: true, value: { number: 12.5, unit: 'mm' } });
		expect(parseEntry(number(), ' 12.5 ')).toEqual({
			ok: true,
			value: { number: 12.5, unit: 'mm' }
		});
		expect(parseEntry(number(), '12')).toEqual({ ok: true, value: { number: 12, unit: 'mm' } });
		expect(parseEntry(number(), '-3.5')).toEqual({ ok: true, value: { number: -3.5, unit: 'mm' } });
		expect(parseEntry(number(), '+3')).toEqual({ ok: true, value: { number: 3, unit: 'mm' } });
	});

	it('accepts a decimal comma where it is the only separator', () => {
		// The decimal comma is usual on many shop floors (common practice, no source).
		expect(parseEntry(number(), '12,5')).toEqual({ ok: true, value: { number: 12.5, unit: 'mm' } });
		expect(parseEntry(number({ decimals: 2 }), '0,25')).toEqual({
			ok: true,
			value: { number: 0.25, unit: 'mm' }
		});
	});

	it('refuses thousands separators and mixed separators rather than guess', () => {
		for (const raw of ['1,234.5', '1.234,5', '12,5,0'])
			expect(parseEntry(number(), raw), raw).toMatchObject({ ok: false });
		// A lone comma is read as the decimal separator: "1,234" on a one-decimal field is refused
		// for its decimals rather than taken as one thousand two hundred and thirty-four.
		expect(parseEntry(number(), '1,234')).toMatchObject({ ok: false });
	});

	it('refuses more decimals than the procedure records, in words that say how many', () => {
		expect(parseEntry(number(), '12.55')).toEqual({
			ok: false,
			message: 'Enter at most 1 decimal, as the procedure records.'
		});
		expect(parseEntry(number({ decimals: 2 }), '3.655')).toEqual({
			ok: false,
			message: 'Enter at most 2 decimals, as the procedure records.'
		});
		expect(parseEntry(number({ decimals: 0 }), '3.5')).toEqual({
			ok: false,
			message: 'Enter a whole number: the procedure records no decimals.'
		});
		// A trailing zero is a decimal too: the field records whole numbers.
		expect(parseEntry(number({ decimals: 0 }), '3.0')).toMatchObject({ ok: false });
		expect(parseEntry(number({ decimals: 2 }), '3.6')).toEqual({
			ok: true,
			value: { number: 3.6, unit: 'mm' }
		});
	});

	it('refuses what is not a number, naming the unit', () => {
		for (const raw of ['abc', '12 mm', '1e3', '.5', '5.', '0x10', 'NaN', 'Infinity', '--1'])
			expect(parseEntry(number(), raw), raw).toEqual({
				ok: false,
				message: 'Enter a number in mm.'
			});
	});

	it('refuses a number out of any measurable range', () => {
		expect(parseEntry(number({ decimals: 0 }), '1000000000000')).toMatchObject({ ok: true });
		expect(parseEntry(number({ decimals: 0 }), '1000000000001')).toEqual({
			ok: false,
			message: 'That number is out of any measurable range.'
		});
	});

	it('reads text up to 2000 characters', () => {
		const t = field('t', 'text');
		expect(parseEntry(t, '  LP-0042 ')).toEqual({ ok: true, value: { text: 'LP-0042' } });
		expect(parseEntry(t, 'x'.repeat(2000))).toMatchObject({ ok: true });
		expect(parseEntry(t, 'x'.repeat(2001))).toEqual({
			ok: false,
			message: 'Keep it under 2000 characters.'
		});
	});

	it('reads pass or fail, and nothing else', () => {
		const f = field('p', 'pass_fail');
		expect(parseEntry(f, 'pass')).toEqual({ ok: true, value: { pass: true } });
		expect(parseEntry(f, 'fail')).toEqual({ ok: true, value: { pass: false } });
		for (const raw of ['yes', 'true', '1', 'PASS'])
			expect(parseEntry(f, raw), raw).toEqual({ ok: false, message: 'Choose pass or fail.' });
	});

	it('leaves tightening to the server, which builds it from the passes ticked (6/10)', () => {
		const f = field('g', 'tightening');
		expect(parseEntry(f, 'completed')).toMatchObject({ ok: false });
	});

	it('takes a number in another unit of its quantity and keeps that unit (NIST SP 811 factors)', () => {
		const f = number({ unit: 'N·m', decimals: 1 });
		expect(entryUnits('N·m')).toEqual(['N·m', 'lbf·in', 'lbf·ft']);
		expect(parseEntry(f, '53.12', 'lbf·in')).toEqual({
			ok: true,
			value: { number: 53.12, unit: 'lbf·in' }
		});
		expect(parseEntry(f, '5', 'psi')).toMatchObject({ ok: false });
		expect(parseEntry(f, '5', 'furlong')).toMatchObject({ ok: false });
		expect(entryUnits('pcs')).toEqual(['pcs']);
	});

	it('takes only one of the options of a choice, exactly as written', () => {
		const f = field('c', 'choice', { options: ['Clean, undamaged', 'Damaged'] });
		expect(parseEntry(f, 'Damaged')).toEqual({ ok: true, value: { choice: 'Damaged' } });
		expect(parseEntry(f, ' Damaged ')).toEqual({ ok: true, value: { choice: 'Damaged' } });
		for (const raw of ['Worn', 'damaged', 'Clean'])
			expect(parseEntry(f, raw), raw).toEqual({
				ok: false,
				message: 'Choose one of the options.'
			});
	});

	it('takes lots and instruments as ids (lowercased), never as typed codes', () => {
		const lot = field('l', 'part_lot');
		const inst = field('i', 'instrument', { instrumentKind: 'Caliper' });
		expect(parseEntry(lot, uuid)).toEqual({ ok: true, value: { lotId: uuid } });
		expect(parseEntry(lot, uuid.toUpperCase())).toEqual({ ok: true, value: { lotId: uuid } });
		expect(parseEntry(inst, uuid.toUpperCase())).toEqual({
			ok: true,
			value: { instrumentId: uuid }
		});
		expect(parseEntry(lot, 'L25-0412')).toEqual({
			ok: false,
			message: 'Choose the lot from the list.'
		});
		expect(parseEntry(inst, 'CA-01')).toEqual({
			ok: false,
			message: 'Choose the instrument from the list.'
		});
		expect(parseEntry(inst, `${uuid}x`)).toMatchObject({ ok: false });
	});

	it('refuses hand entry of photos and calculated values', () => {
		for (const kind of ['photo', 'calculated'] as const)
			expect(parseEntry(field('x', kind), 'anything')).toEqual({
				ok: false,
				message: 'This field is not entered by hand.'
			});
	});
});

describe('withinLimits: inclusive limits; outside is a deviation (DI3)', () => {
	const n = (value: number): EntryValue => ({ number: value });

	it('takes both ends of a range', () => {
		const f = number({ limitType: 'range', min: 2, max: 3.5, decimals: 2 });
		expect(withinLimits(f, n(2))).toBe(true);
		expect(withinLimits(f, n(3.5))).toBe(true);
		expect(withinLimits(f, n(2.75))).toBe(true);
		expect(withinLimits(f, n(1.99))).toBe(false);
		expect(withinLimits(f, n(3.51))).toBe(false);
	});

	it('a minimum only: at and above it is within', () => {
		const f = number({ unit: 'L/min', limitType: 'range', min: 40, max: null });
		expect(withinLimits(f, n(40))).toBe(true);
		expect(withinLimits(f, n(250))).toBe(true);
		expect(withinLimits(f, n(39.9))).toBe(false);
	});

	it('a maximum only: at and below it is within', () => {
		const f = number({ unit: '°C', decimals: 0, limitType: 'range', min: null, max: 40 });
		expect(withinLimits(f, n(40))).toBe(true);
		expect(withinLimits(f, n(-5))).toBe(true);
		expect(withinLimits(f, n(41))).toBe(false);
	});

	it('a target ± tolerance includes both ends: 10.0 ± 0.5 takes 10.5 and 9.5, not 10.6 or 9.4', () => {
		const f = number({ limitType: 'target', target: 10, tolerance: 0.5 });
		expect(withinLimits(f, n(10))).toBe(true);
		expect(withinLimits(f, n(10.5))).toBe(true);
		expect(withinLimits(f, n(9.5))).toBe(true);
		expect(withinLimits(f, n(10.6))).toBe(false);
		expect(withinLimits(f, n(9.4))).toBe(false);
	});

	it('is not fooled by binary floating point at the edge of a tolerance', () => {
		// In IEEE 754 doubles 2.4 − 2.3 is slightly more than 0.1, and 0.3 − 0.2 slightly less.
		expect(Math.abs(2.4 - 2.3) <= 0.1).toBe(false);
		const f = number({ limitType: 'target', target: 2.3, tolerance: 0.1 });
		expect(withinLimits(f, n(2.4))).toBe(true);
		expect(withinLimits(f, n(2.2))).toBe(true);
		expect(withinLimits(f, n(2.5))).toBe(false);
		const g = number({ limitType: 'target', target: 0.3, tolerance: 0.1, decimals: 2 });
		expect(withinLimits(g, n(0.4))).toBe(true);
		expect(withinLimits(g, n(0.2))).toBe(true);
		expect(withinLimits(g, n(0.41))).toBe(false);
	});

	it('judges a value in another unit converted and rounded to the field’s decimals (ASTM E29 rounding method, from memory)', () => {
		// 53.1 lbf·in × 0.1129848 N·m per lbf·in (NIST SP 811 B.8) = 5.9995 N·m, shown 6.0 N·m.
		const f = number({ unit: 'N·m', decimals: 1, limitType: 'range', min: 5.5, max: 6 });
		expect(inFieldUnit(f, { number: 53.1, unit: 'lbf·in' })).toBe(6);
		expect(withinLimits(f, { number: 53.1, unit: 'lbf·in' })).toBe(true);
		// 54 lbf·in = 6.101 N·m, shown 6.1: over the maximum.
		expect(withinLimits(f, { number: 54, unit: 'lbf·in' })).toBe(false);
		expect(valueText(f, { number: 54, unit: 'lbf·in' })).toBe('6.1 N·m (entered as 54 lbf·in)');
	});

	it('sameValue: an entry saved before 6/10 (no unit) equals the same number in the procedure’s unit; a TUR is not part of the value', () => {
		const f = number({ unit: '°C' });
		expect(sameValue(f, { number: 13 }, { number: 13, unit: '°C' })).toBe(true);
		expect(sameValue(f, { number: 13 }, { number: 13, unit: 'K' })).toBe(false);
		expect(
			sameValue(f, instrumentValue, { ...instrumentValue, tur: [{ field: 'x', ratio: 5 }] })
		).toBe(true);
	});

	it('a tightening is judged by its final torque against the valve’s figure, in N·m at one decimal', () => {
		const t = (number: number, unit: string, targetTorque: number | null = 6): EntryValue => ({
			tightening: { pattern: 'full', fasteners: 4, sequence: [1, 3, 2, 4], round: 1, passes: [] },
			finalTorque: { number, unit },
			targetTorque,
			wrench: {
				instrumentId: uuid,
				code: 'TW-01',
				kind: 'Torque wrench',
				calibrationDueOn: '2027-01-01'
			}
		});
		const g = field('g', 'tightening');
		expect(withinLimits(g, t(6, 'N·m'))).toBe(true);
		// 53.1 lbf·in = 5.9995 N·m (NIST SP 811 B.8), shown 6.0.
		expect(withinLimits(g, t(53.1, 'lbf·in'))).toBe(true);
		expect(withinLimits(g, t(8, 'N·m'))).toBe(false);
		expect(withinLimits(g, t(6, 'N·m', null))).toBeNull();
	});

	it('has no result where the field has no limits', () => {
		expect(withinLimits(number(), n(12.5))).toBeNull();
		expect(
			withinLimits(number({ limitType: 'target', target: 10, tolerance: null }), n(99))
		).toBeNull();
		expect(withinLimits(field('t', 'text'), { text: 'x' })).toBeNull();
		expect(withinLimits(field('c', 'choice', { options: ['A'] }), { choice: 'A' })).toBeNull();
	});

	it('a failed pass/fail check is outside its limits; a pass and completed passes are within', () => {
		const f = field('p', 'pass_fail');
		expect(withinLimits(f, { pass: false })).toBe(false);
		expect(withinLimits(f, { pass: true })).toBe(true);
		expect(withinLimits(field('g', 'tightening'), { completed: true })).toBe(true);
	});
});

const lotValue: EntryValue = {
	lotId: uuid,
	partNumber: 'DIA-025-EP',
	supplierLot: 'L25-0412',
	materialCode: 'DM-EPDM-70',
	expiresOn: '2027-03-31'
};
const instrumentValue: EntryValue = {
	instrumentId: uuid,
	code: 'CA-01',
	kind: 'Caliper',
	calibrationDueOn: '2026-11-30'
};

describe('valueText: a value in words with its unit', () => {
	it('shows numbers at the field’s decimals with the unit', () => {
		expect(valueText(number({ decimals: 2 }), { number: 3.6 })).toBe('3.60 mm');
		expect(valueText(number({ unit: 'pcs', decimals: 0 }), { number: 0 })).toBe('0 pcs');
		expect(valueText(number({ unit: 'L/min' }), { number: 36.5 })).toBe('36.5 L/min');
		expect(valueText(number({ unit: '' }), { number: 2 })).toBe('2.0');
	});

	it('shows the other kinds in words', () => {
		expect(valueText(field('t', 'text'), { text: 'LP-0042' })).toBe('LP-0042');
		expect(valueText(field('p', 'pass_fail'), { pass: true })).toBe('Pass');
		expect(valueText(field('p', 'pass_fail'), { pass: false })).toBe('Fail');
		expect(valueText(field('c', 'choice'), { choice: 'Damaged' })).toBe('Damaged');
		expect(valueText(field('g', 'tightening'), { completed: true })).toBe('Passes completed');
	});

	it('names a lot with its part, material and expiry, and an instrument with its calibration', () => {
		expect(valueText(field('l', 'part_lot'), lotValue)).toBe(
			'DIA-025-EP lot L25-0412 (DM-EPDM-70, expires 2027-03-31)'
		);
		expect(valueText(field('l', 'part_lot'), { ...lotValue, expiresOn: null })).toBe(
			'DIA-025-EP lot L25-0412 (DM-EPDM-70)'
		);
		expect(valueText(field('i', 'instrument'), instrumentValue)).toBe(
			'CA-01 (Caliper, calibration due 2026-11-30)'
		);
	});

	it('rawOf gives back the form text that parses to the same value', () => {
		const cases: [ProcedureField, EntryValue][] = [
			[number({ decimals: 2 }), { number: 3.65, unit: 'mm' }],
			[field('t', 'text'), { text: 'LP-0042' }],
			[field('p', 'pass_fail'), { pass: false }],
			[field('c', 'choice', { options: ['A', 'B'] }), { choice: 'B' }]
		];
		for (const [f, value] of cases)
			expect(parseEntry(f, rawOf(value)), f.kind).toEqual({ ok: true, value });
		expect(rawOf(lotValue)).toBe(uuid);
		expect(rawOf(instrumentValue)).toBe(uuid);
	});
});

describe('statusOf: the status follows from the newest transition that changes it', () => {
	const of = (...kinds: TransitionKind[]) => statusOf(kinds.map((kind) => ({ kind })));
	it('walks Planned → In progress → Executed → Released', () => {
		expect(of()).toBe('planned');
		expect(of('planned')).toBe('planned');
		expect(of('planned', 'started')).toBe('in_progress');
		expect(of('planned', 'started', 'executed')).toBe('executed');
		expect(of('planned', 'started', 'executed', 'trail_reviewed', 'released')).toBe('released');
	});
	it('a trail review changes nothing; Returned goes back to In progress; Cancelled ends it', () => {
		expect(of('planned', 'started', 'executed', 'trail_reviewed')).toBe('executed');
		expect(of('planned', 'started', 'executed', 'returned')).toBe('in_progress');
		expect(of('planned', 'started', 'executed', 'returned', 'executed')).toBe('executed');
		expect(of('planned', 'cancelled')).toBe('cancelled');
	});
});

// ── Rows ──────────────────────────────────────────────────────────────────────

let seq = 0;
const entry = (
	stepKey: string,
	fieldKey: string,
	value: EntryValue,
	more: Partial<EntryRow> = {}
): EntryRow => {
	seq++;
	return {
		id: `e${seq}`,
		stepKey,
		fieldKey,
		value,
		withinLimits: null,
		performedAt: '2026-01-15T09:00:00.000Z',
		lateReason: null,
		corrects: null,
		reason: null,
		recordedBy: 'tech-a',
		recordedByName: 'Technician A',
		recordedAt: '2026-01-15T09:00:00.000Z',
		auditSeq: seq,
		...more
	};
};
const signoff = (
	stepKey: string,
	kind: SignoffRow['kind'],
	more: Partial<SignoffRow> = {}
): SignoffRow => {
	seq++;
	return {
		id: `s${seq}`,
		stepKey,
		kind,
		signatureId: kind === 'returned' ? null : `sig${seq}`,
		reason: kind === 'returned' ? 'Check the value again.' : null,
		recordedBy: kind === 'performed' ? 'tech-a' : 'tech-b',
		recordedByName: kind === 'performed' ? 'Technician A' : 'Technician B',
		recordedAt: '2026-01-15T09:05:00.000Z',
		auditSeq: seq,
		...more
	};
};

const measure: ProcedureStep = {
	...blankStep('measure'),
	title: 'Measure',
	instruction: 'Measure the flow.',
	verificationRequired: true,
	fields: [
		field('flow', 'number', {
			unit: 'L/min',
			decimals: 1,
			limitType: 'range',
			min: 40,
			max: null
		}),
		field('no-leak', 'pass_fail'),
		field('notes', 'text', { required: false }),
		field('kv', 'calculated', { required: true, calculation: 'flow_coefficient' })
	]
};
const photoStep: ProcedureStep = {
	...blankStep('photo'),
	title: 'Photograph',
	instruction: 'Photograph the seat.',
	fields: [field('seat', 'choice', { options: ['Clean'] }), field('seat-photo', 'photo')]
};

describe('stepStatus: a step’s state from its rows', () => {
	it('Not started, then Entered, listing the required fields still missing (not calculated ones)', () => {
		expect(stepStatus(measure, [], [])).toMatchObject({
			state: 'not_started',
			missing: ['flow', 'no-leak'],
			revision: 0,
			outside: false
		});
		const e = [entry('measure', 'flow', { number: 52 }, { withinLimits: true })];
		expect(stepStatus(measure, e, [])).toMatchObject({
			state: 'entered',
			missing: ['no-leak'],
			revision: 1
		});
	});

	it('Entered → Performed → Verified as the signoffs follow the last entry', () => {
		const e = [
			entry('measure', 'flow', { number: 52 }, { withinLimits: true }),
			entry('measure', 'no-leak', { pass: true }, { withinLimits: true })
		];
		expect(stepStatus(measure, e, [])).toMatchObject({ state: 'entered', missing: [] });
		const p = signoff('measure', 'performed');
		const performed = stepStatus(measure, e, [p]);
		expect(performed).toMatchObject({ state: 'performed', performed: p, verified: null });
		const v = signoff('measure', 'verified');
		const verified = stepStatus(measure, e, [p, v]);
		expect(verified).toMatchObject({ state: 'verified', performed: p, verified: v });
		expect(verified.revision).toBe(4);
		expect(stepDone(measure, performed)).toBe(false);
		expect(stepDone(measure, verified)).toBe(true);
		expect(stepDone({ ...measure, verificationRequired: false }, performed)).toBe(true);
	});

	it('a verification without a Performed signature before it counts for nothing', () => {
		const e = [entry('measure', 'flow', { number: 52 })];
		expect(stepStatus(measure, e, [signoff('measure', 'verified')]).state).toBe('entered');
	});

	it('a correction after Performed (or Verified) sends the step back to Entered', () => {
		const first = entry('measure', 'flow', { number: 35 }, { withinLimits: false });
		const e = [first, entry('measure', 'no-leak', { pass: true }, { withinLimits: true })];
		const s = [signoff('measure', 'performed'), signoff('measure', 'verified')];
		expect(stepStatus(measure, e, s).state).toBe('verified');
		const fix = entry(
			'measure',
			'flow',
			{ number: 53 },
			{ withinLimits: true, corrects: first.id, reason: 'Typing error' }
		);
		const after = stepStatus(measure, [...e, fix], s);
		expect(after).toMatchObject({ state: 'entered', performed: null, verified: null });
		// Signed again after the correction: Performed once more.
		const again = signoff('measure', 'performed');
		expect(stepStatus(measure, [...e, fix], [...s, again])).toMatchObject({
			state: 'performed',
			performed: again
		});
	});

	it('Returned by the verifier until something is entered again', () => {
		const e = [
			entry('measure', 'flow', { number: 52 }),
			entry('measure', 'no-leak', { pass: true })
		];
		const p = signoff('measure', 'performed');
		const r = signoff('measure', 'returned');
		expect(stepStatus(measure, e, [p, r])).toMatchObject({
			state: 'returned',
			performed: null,
			returned: r
		});
		const more = entry('measure', 'notes', { text: 'Measured again at nominal pressure.' });
		expect(stepStatus(measure, [...e, more], [p, r]).state).toBe('entered');
	});

	it('counts every row of the step, and only of the step, as its revision', () => {
		const mine = [entry('measure', 'flow', { number: 35 })];
		const fix = entry('measure', 'flow', { number: 52 }, { corrects: mine[0]!.id });
		const other = [entry('photo', 'seat', { choice: 'Clean' })];
		const s = [signoff('photo', 'performed'), signoff('measure', 'performed')];
		expect(stepStatus(measure, [...mine, fix, ...other], s).revision).toBe(3);
		expect(stepStatus(photoStep, [...mine, fix, ...other], s).revision).toBe(2);
	});

	it('is outside its limits only for values in force', () => {
		const low = entry('measure', 'flow', { number: 35 }, { withinLimits: false });
		expect(stepStatus(measure, [low], []).outside).toBe(true);
		const fix = entry('measure', 'flow', { number: 52 }, { withinLimits: true, corrects: low.id });
		expect(stepStatus(measure, [low, fix], []).outside).toBe(false);
	});

	it('a required photo stays missing until photo evidence exists, so the step cannot be signed', () => {
		const e = [entry('photo', 'seat', { choice: 'Clean' })];
		expect(stepStatus(photoStep, e, []).missing).toEqual(['seat-photo']);
	});

	it('currentEntries: the values in force, in the procedure’s field order', () => {
		const leak = entry('measure', 'no-leak', { pass: true });
		const low = entry('measure', 'flow', { number: 35 });
		const fix = entry('measure', 'flow', { number: 52 }, { corrects: low.id });
		expect(currentEntries(measure, [leak, low, fix]).map((e) => e.id)).toEqual([fix.id, leak.id]);
	});
});

// ── What signatures bind to (ES3) ─────────────────────────────────────────────

const wo: WorkOrderIdentity = {
	id: '7a1d0c52-0f6e-4f2b-9c1a-3e5d7b9f1a2c',
	number: 'WO-2026-0007',
	equipmentTag: 'XV-3104',
	procedureCode: 'MP-DV-01',
	procedureVersion: 1
};

describe('stepSignedContent: what a Performed or Verified signature binds to', () => {
	const rows = () => {
		const a = entry('measure', 'flow', { number: 52 }, { id: 'flow-1', withinLimits: true });
		const b = entry('measure', 'no-leak', { pass: true }, { id: 'leak-1', withinLimits: true });
		return [a, b];
	};

	it('names the work order, the step and every value in force with its text and result', () => {
		const c = stepSignedContent(wo, measure, 3, rows());
		expect(c.type).toBe(STEP_RECORD);
		expect(c.id).toBe(`${wo.id}:measure`);
		expect(c.content).toMatchObject({
			workOrder: 'WO-2026-0007',
			equipment: 'XV-3104',
			procedure: { code: 'MP-DV-01', version: 1 },
			step: { key: 'measure', position: 3, title: 'Measure' }
		});
		expect(c.content.entries.map((e) => [e.field, e.text, e.withinLimits])).toEqual([
			['flow', '52.0 L/min', true],
			['no-leak', 'Pass', true]
		]);
	});

	it('the same entries give the same content, whatever order the rows come in', () => {
		const [a, b] = rows();
		expect(stepSignedContent(wo, measure, 3, [a!, b!])).toEqual(
			stepSignedContent(wo, measure, 3, [b!, a!])
		);
		// Rows of other steps do not enter it.
		expect(
			stepSignedContent(wo, measure, 3, [a!, b!, entry('photo', 'seat', { choice: 'Clean' })])
		).toEqual(stepSignedContent(wo, measure, 3, [a!, b!]));
	});

	it('a correction changes the content, so the earlier signature stops matching', () => {
		const before = rows();
		const fix = entry(
			'measure',
			'flow',
			{ number: 53 },
			{ id: 'flow-2', corrects: 'flow-1', withinLimits: true }
		);
		const a = stepSignedContent(wo, measure, 3, before);
		const b = stepSignedContent(wo, measure, 3, [...before, fix]);
		expect(b).not.toEqual(a);
		expect(b.content.entries[0]).toMatchObject({ entryId: 'flow-2', text: '53.0 L/min' });
		// Even a correction back to the same value is a new entry: the content still changes.
		const same = entry(
			'measure',
			'flow',
			{ number: 52 },
			{ id: 'flow-3', corrects: 'flow-1', withinLimits: true }
		);
		expect(stepSignedContent(wo, measure, 3, [...before, same])).not.toEqual(a);
	});

	it('binds the step’s own photos by hash (voided ones marked); a step without any hashes as before', () => {
		const photo = (
			id: string,
			more: Partial<NonNullable<Parameters<typeof stepSignedContent>[4]>[number]> = {}
		) => ({
			id,
			stepKey: 'measure',
			fieldKey: null,
			deviationId: null,
			sha256: id.repeat(64).slice(0, 64),
			voidId: null,
			...more
		});
		const plain = stepSignedContent(wo, measure, 3, rows());
		expect(stepSignedContent(wo, measure, 3, rows(), [])).toEqual(plain);
		expect(plain.content).not.toHaveProperty('photos');
		// A photo field's photo is an entry, a deviation's belongs to the deviation, another step's to it.
		expect(
			stepSignedContent(wo, measure, 3, rows(), [
				photo('a', { fieldKey: 'seat-photo' }),
				photo('b', { deviationId: 'dev-1' }),
				photo('c', { stepKey: 'other' })
			])
		).toEqual(plain);
		const withTwo = stepSignedContent(wo, measure, 3, rows(), [
			photo('e'),
			photo('d', { voidId: 'v-1' })
		]);
		expect(withTwo.content.photos).toEqual([
			{ evidenceId: 'd', sha256: 'd'.repeat(64), voided: true },
			{ evidenceId: 'e', sha256: 'e'.repeat(64), voided: false }
		]);
		expect(
			stepSignedContent(wo, measure, 3, rows(), [photo('d', { voidId: 'v-1' }), photo('e')])
		).toEqual(withTwo);
	});
});

describe('workOrderSignedContent: Executed and Released', () => {
	const steps = [measure];
	const e = [
		entry('measure', 'flow', { number: 35 }, { id: 'flow-1', withinLimits: false }),
		entry('measure', 'no-leak', { pass: true }, { id: 'leak-1', withinLimits: true })
	];
	const s = [
		signoff('measure', 'performed', { signatureId: 'sig-p' }),
		signoff('measure', 'verified', { signatureId: 'sig-v' })
	];
	const open = [{ number: 'DEV-2026-0001', dispositionSignatureId: null }];
	const dispositioned = [{ number: 'DEV-2026-0001', dispositionSignatureId: 'sig-d' }];

	it('the Executed content holds each step’s state, entries and signatures, and the deviations', () => {
		const c = workOrderSignedContent(wo, steps, e, s, open);
		expect(c.type).toBe(WORK_ORDER_RECORD);
		expect(c.id).toBe(wo.id);
		expect(c.content).toEqual({
			number: 'WO-2026-0007',
			equipment: 'XV-3104',
			procedure: { code: 'MP-DV-01', version: 1 },
			steps: [
				{
					key: 'measure',
					state: 'verified',
					entries: ['flow-1', 'leak-1'],
					performed: 'sig-p',
					verified: 'sig-v'
				}
			],
			deviations: ['DEV-2026-0001']
		});
	});

	it('a disposition does not change the Executed content: Quality’s work never breaks it', () => {
		expect(workOrderSignedContent(wo, steps, e, s, dispositioned)).toEqual(
			workOrderSignedContent(wo, steps, e, s, open)
		);
	});

	it('the Released content changes with the disposition and the trail review', () => {
		const before = workOrderSignedContent(wo, steps, e, s, open, {
			trailReviewSignatureId: 'sig-t',
			executedSignatureId: null
		});
		const after = workOrderSignedContent(wo, steps, e, s, dispositioned, {
			trailReviewSignatureId: 'sig-t',
			executedSignatureId: null
		});
		expect(after.type).toBe(RELEASE_RECORD);
		expect(after).not.toEqual(before);
		expect(after.content).toMatchObject({
			deviations: [{ number: 'DEV-2026-0001', disposition: 'sig-d' }],
			trailReview: 'sig-t'
		});
		expect(
			workOrderSignedContent(wo, steps, e, s, dispositioned, {
				trailReviewSignatureId: null,
				executedSignatureId: null
			})
		).not.toEqual(after);
	});

	it('a correction after execution changes the Executed content', () => {
		const fix = entry(
			'measure',
			'flow',
			{ number: 52 },
			{ id: 'flow-2', corrects: 'flow-1', withinLimits: true }
		);
		expect(workOrderSignedContent(wo, steps, [...e, fix], s, open)).not.toEqual(
			workOrderSignedContent(wo, steps, e, s, open)
		);
	});
});
