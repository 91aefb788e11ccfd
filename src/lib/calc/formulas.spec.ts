import { describe, expect, it } from 'vitest';
import {
	blankField,
	blankStep,
	cleanField,
	stepSchema,
	type ProcedureField
} from '../schemas/procedure';
import { passProgress, turOf, withinLimits, type CalculatedValue, type PassRow } from '../work';
import { evaluate, formulas } from './formulas';
import { checkPasses, passesFor } from './tightening';

// Calculated step fields and guided tightening (issue 6/10 items 4, 7, 8). Sources beside each check.
const value = <T>(r: { ok: true; value: T } | { ok: false; message: string }) => {
	if (!r.ok) throw new Error(r.message);
	return r.value;
};
const band = { min: 10, max: 15 };

describe('calculated fields: evaluate() is what the server stores and the browser shows', () => {
	it('compression 4.20 → 3.65 mm is 13.1 %, within 10–15 % (band: common practice, no source)', () => {
		const r = value(
			evaluate(
				'diaphragm_compression',
				[
					{ value: 4.2, unit: 'mm' },
					{ value: 3.65, unit: 'mm' }
				],
				1,
				band
			)
		);
		expect(r).toEqual({ value: 13.1, used: [4.2, 3.65], judgement: 'within' });
	});

	it('compression from inches converts with 1 in = 25.4 mm exactly (NIST SP 811 B.8)', () => {
		// 0.1654 in = 4.20116 mm and 0.1437 in = 3.64998 mm: (4.20116 − 3.64998) / 4.20116 = 13.1 %.
		const r = value(
			evaluate(
				'diaphragm_compression',
				[
					{ value: 0.1654, unit: 'in' },
					{ value: 0.1437, unit: 'in' }
				],
				1,
				band
			)
		);
		expect(r.value).toBe(13.1);
		expect(r.used[0]).toBeCloseTo(4.20116, 5);
	});

	it('over and under the band, judged as shown at the field’s decimals', () => {
		const over = (after: number) =>
			value(
				evaluate(
					'diaphragm_compression',
					[
						{ value: 4, unit: 'mm' },
						{ value: after, unit: 'mm' }
					],
					1,
					band
				)
			);
		expect(over(3.2)).toMatchObject({ value: 20, judgement: 'over' });
		expect(over(3.8)).toMatchObject({ value: 5, judgement: 'under' });
		expect(over(3.4)).toMatchObject({ value: 15, judgement: 'within' });
	});

	it('Kv of water by its definition: 10 m³/h at a 1 bar drop is Kv 10; 60 L/min at 100 kPa is 3.6 (IEC 60534-1; the worked example of 60534-2-1 is checked in calc.spec.ts)', () => {
		// By definition of Kv (IEC 60534-1): the flow in m³/h of water at 1 bar drop.
		expect(
			value(
				evaluate(
					'flow_coefficient',
					[
						{ value: 10, unit: 'm³/h' },
						{ value: 1, unit: 'bar' }
					],
					2,
					null
				)
			)
		).toEqual({ value: 10, used: [10, 1], judgement: null });
		// 60 L/min = 3.6 m³/h at 100 kPa = 1 bar (SP 811 factors): Kv 3.6.
		expect(
			value(
				evaluate(
					'flow_coefficient',
					[
						{ value: 60, unit: 'L/min' },
						{ value: 100, unit: 'kPa' }
					],
					2,
					null
				)
			).value
		).toBe(3.6);
	});

	it('bad inputs give a clear message, never NaN or Infinity', () => {
		const cases: [keyof typeof formulas, { value: number; unit: string }[]][] = [
			[
				'diaphragm_compression',
				[
					{ value: 0, unit: 'mm' },
					{ value: 0, unit: 'mm' }
				]
			],
			[
				'diaphragm_compression',
				[
					{ value: -1, unit: 'mm' },
					{ value: 1, unit: 'mm' }
				]
			],
			[
				'diaphragm_compression',
				[
					{ value: 3, unit: 'mm' },
					{ value: 4, unit: 'mm' }
				]
			],
			[
				'diaphragm_compression',
				[
					{ value: 3, unit: 'furlong' },
					{ value: 2, unit: 'mm' }
				]
			],
			['diaphragm_compression', [{ value: 3, unit: 'mm' }]],
			[
				'flow_coefficient',
				[
					{ value: 10, unit: 'm³/h' },
					{ value: -1, unit: 'bar' }
				]
			],
			[
				'flow_coefficient',
				[
					{ value: 10, unit: 'm³/h' },
					{ value: 0, unit: 'bar' }
				]
			],
			[
				'flow_coefficient',
				[
					{ value: 10, unit: 'mm' },
					{ value: 1, unit: 'bar' }
				]
			]
		];
		for (const [name, inputs] of cases) {
			const r = evaluate(name, inputs, 1, band);
			expect(r.ok, JSON.stringify(inputs)).toBe(false);
			if (!r.ok) expect(r.message).toMatch(/[a-z]/);
		}
		expect(
			evaluate(
				'diaphragm_compression',
				[
					{ value: 4, unit: 'mm' },
					{ value: 3.5, unit: 'mm' }
				],
				1,
				null
			).ok
		).toBe(false);
	});

	it('a Kv field’s own limits decide; a compression outside the band is outside', () => {
		const kvField: ProcedureField = {
			...blankField('kv', 'calculated'),
			calculation: 'flow_coefficient',
			unit: 'm³/h',
			decimals: 1,
			limitType: 'range',
			min: 3,
			max: 4
		};
		const v = (n: number, judgement: CalculatedValue['judgement'] = null): CalculatedValue => ({
			calculated: n,
			unit: 'm³/h',
			formula: 'flow_coefficient',
			expression: '',
			inputs: [],
			judgement,
			band: null
		});
		expect(withinLimits(kvField, v(3.6))).toBe(true);
		expect(withinLimits(kvField, v(4.2))).toBe(false);
		const c = { ...blankField('c', 'calculated'), calculation: 'diaphragm_compression' as const };
		expect(withinLimits(c, v(20, 'over'))).toBe(false);
		expect(withinLimits(c, v(12, 'within'))).toBe(true);
	});
});

describe('procedure schema: a calculated field names number fields of its step in a unit that converts', () => {
	const num = (key: string, unit: string): ProcedureField => ({
		...blankField(key, 'number'),
		label: key,
		unit
	});
	const calc = (inputs: string[]): ProcedureField => ({
		...blankField('c', 'calculated'),
		label: 'Compression',
		calculation: 'diaphragm_compression',
		unit: '%',
		decimals: 1,
		inputs
	});
	const step = (fields: ProcedureField[]) => ({
		...blankStep('s'),
		title: 'Tighten',
		instruction: 'Tighten.',
		fields
	});
	it('accepts two length fields', () => {
		expect(
			stepSchema.safeParse(step([num('a', 'mm'), num('b', 'in'), calc(['a', 'b'])])).success
		).toBe(true);
	});
	it('refuses a missing, unknown, unconvertible or repeated input, with a message on the input', () => {
		for (const [fields, text] of [
			[[num('a', 'mm'), calc(['a'])], /Choose the 2 fields/],
			[[num('a', 'mm'), calc(['a', 'zz'])], /number field of this step/],
			[[num('a', 'mm'), num('b', 'bar'), calc(['a', 'b'])], /does not convert to mm/],
			[[num('a', 'mm'), calc(['a', 'a'])], /different field/]
		] as const) {
			const r = stepSchema.safeParse(step([...fields]));
			expect(r.success).toBe(false);
			expect(r.error?.issues.map((i) => i.message).join(' ')).toMatch(text);
		}
	});
	it('a compression takes its band from the valve: limits left from a number field are dropped, not a trap', () => {
		const f = { ...calc(['a', 'b']), limitType: 'range' as const, min: 10, max: 15 };
		const r = stepSchema.safeParse(step([num('a', 'mm'), num('b', 'mm'), f]));
		expect(r.success).toBe(true);
		expect(cleanField(r.data!.fields[2]!)).toMatchObject({
			limitType: 'none',
			min: null,
			max: null
		});
	});
});

describe('guided tightening: passes and their order', () => {
	it('a check pass is one pass at 100 % in the cross order (4 fasteners: 1-3-2-4, PCC-1 legacy, from memory)', () => {
		expect(value(checkPasses(4, 6))).toEqual([
			{
				name: 'Check at 100 % in the cross pattern',
				share: 1,
				torque: 6,
				order: 'cross',
				sequence: [1, 3, 2, 4]
			}
		]);
		expect(value(passesFor('full', 4, 6))).toHaveLength(5);
		expect(passesFor('check', 4, null).ok).toBe(false);
	});
	const row = (round: number, pass: number, seq: number): PassRow => ({
		id: `${round}-${pass}`,
		stepKey: 's',
		fieldKey: 't',
		round,
		pass,
		name: `pass ${pass}`,
		targetTorque: null,
		unit: 'N·m',
		reason: pass === 0 ? 'refitted' : null,
		recordedBy: null,
		recordedByName: 'x',
		recordedAt: '2026-12-01T10:00:00.000Z',
		auditSeq: seq
	});
	it('progress counts the passes of the newest round; a restart starts again from the first', () => {
		expect(passProgress([], 's', 't')).toMatchObject({ round: 1, next: 1, done: [] });
		const rows = [row(1, 1, 1), row(1, 2, 2)];
		expect(passProgress(rows, 's', 't')).toMatchObject({ round: 1, next: 3 });
		const restarted = [...rows, row(2, 0, 3), row(2, 1, 4)];
		const p = passProgress(restarted, 's', 't');
		expect(p).toMatchObject({ round: 2, next: 2 });
		expect(p.restarts.map((r) => r.reason)).toEqual(['refitted']);
		expect(passProgress(restarted, 's', 'other').next).toBe(1);
	});
});

describe('test uncertainty ratio of an instrument for the step’s tolerances (ANSI/NCSL Z540.3)', () => {
	const flow = (more: Partial<ProcedureField>): ProcedureField => ({
		...blankField('flow', 'number'),
		unit: 'L/min',
		decimals: 1,
		...more
	});
	it('40–80 L/min with U95 1.5 L/min: TUR 40 / 3 = 13.33; 50 ± 2 L/min: 4 / 3 = 1.33', () => {
		const meter = { unit: 'L/min', uncertaintyU95: 1.5 };
		expect(turOf([flow({ limitType: 'range', min: 40, max: 80 })], meter)).toEqual([
			{ field: 'flow', ratio: 13.33 }
		]);
		expect(turOf([flow({ limitType: 'target', target: 50, tolerance: 2 })], meter)).toEqual([
			{ field: 'flow', ratio: 1.33 }
		]);
	});
	it('the handbook example in other units: ±1.0 psi, U95 0.25 psi → 4.0 even with the limits in kPa', () => {
		// ±1 psi = ±6.894757 kPa (SP 811); the ratio does not depend on the unit.
		const f = {
			...blankField('p', 'number'),
			unit: 'kPa',
			decimals: 6,
			limitType: 'target' as const,
			target: 100,
			tolerance: 6.894757
		};
		expect(turOf([f], { unit: 'psi', uncertaintyU95: 0.25 })[0]!.ratio).toBe(4);
	});
	it('no ratio for one-sided limits or a unit that does not convert', () => {
		const meter = { unit: 'L/min', uncertaintyU95: 1.5 };
		expect(turOf([flow({ limitType: 'range', min: 40, max: null })], meter)).toEqual([]);
		expect(turOf([flow({ unit: 'bar', limitType: 'range', min: 1, max: 2 })], meter)).toEqual([]);
	});
});
