import { compressionPercent, type Band } from './compression';
import { kv, WATER_15C } from './flow';
import { ok, refuse, type Calc } from './result';
import { convert, quantityOf } from './units';

/**
 * The formulas a procedure's *calculated* field can name (6/10 item 7). A field names the
 * formula and, in the formula's order, the keys of the step's number fields that feed it. The
 * server computes the result from the stored inputs (never from the browser), the browser shows
 * the same computation as the technician types, and the record shows the formula with its inputs.
 */
export type FormulaInput = {
	name: string;
	symbol: string;
	label: string;
	/** The unit the formula works in; an input field's unit must convert to it. */
	unit: string;
};
export type Formula = {
	label: string;
	/** The formula as the record prints it. */
	expression: string;
	inputs: FormulaInput[];
	/** The result's unit (the field shows it in this unit). */
	unit: string;
	/** Judged against the equipment's compression band instead of limits on the field. */
	bandFromEquipment: boolean;
	/** What the formula assumes, in words, shown beside the result. */
	assumes: string;
	source: string;
};

export const formulas = {
	diaphragm_compression: {
		label: 'Diaphragm compression',
		expression: 'c = (t₀ − t₁) / t₀ × 100 %',
		inputs: [
			{ name: 'before', symbol: 't₀', label: 'Thickness before tightening', unit: 'mm' },
			{ name: 'after', symbol: 't₁', label: 'Thickness after tightening', unit: 'mm' }
		],
		unit: '%',
		bandFromEquipment: true,
		assumes: 'Judged against the compression band in the valve’s data.',
		source: 'Common practice, no source'
	},
	flow_coefficient: {
		label: 'Flow coefficient Kv',
		expression: 'Kv = Q · √((ρ/ρ₀) / Δp)',
		inputs: [
			{ name: 'flow', symbol: 'Q', label: 'Flow', unit: 'm³/h' },
			{ name: 'dp', symbol: 'Δp', label: 'Pressure drop across the valve', unit: 'bar' }
		],
		unit: 'm³/h',
		bandFromEquipment: false,
		assumes:
			'Water at the reference density (ρ/ρ₀ = 1), non-choked turbulent flow (IEC 60534-2-1).',
		source: 'IEC 60534-2-1'
	}
} as const satisfies Record<string, Formula>;
export type FormulaName = keyof typeof formulas;

export type FormulaValue = { value: number; unit: string; decimals: number };

/** Whether an input field's unit can feed a formula input. */
export const feeds = (fieldUnit: string, input: FormulaInput) =>
	quantityOf(fieldUnit) !== undefined && quantityOf(fieldUnit) === quantityOf(input.unit);

export type Evaluated = {
	/** The result, rounded to the field's decimals (what is shown, stored and judged). */
	value: number;
	/** Each input converted to the formula's unit, as used. */
	used: number[];
	/** Under/within/over the band (compression) or null (limits on the field decide). */
	judgement: 'under' | 'within' | 'over' | null;
};

/**
 * Computes a formula from its inputs (each a value in its own unit). The result is rounded to
 * `decimals` and judged as shown (the rounding method of ASTM E29, from memory).
 */
export function evaluate(
	name: FormulaName,
	inputs: readonly { value: number; unit: string }[],
	decimals: number,
	band: Band | null
): Calc<Evaluated> {
	const formula: Formula = formulas[name];
	if (inputs.length !== formula.inputs.length)
		return refuse('This calculation is missing an input: enter every value it needs.');
	const used: number[] = [];
	for (const [i, input] of inputs.entries()) {
		const c = convert(input.value, input.unit, formula.inputs[i]!.unit);
		if (!c.ok) return c;
		used.push(c.value);
	}
	let raw: Calc<number>;
	if (name === 'diaphragm_compression') raw = compressionPercent(used[0]!, used[1]!);
	else {
		raw = kv({ flowM3h: used[0]!, dpBar: used[1]!, densityKgM3: WATER_15C });
	}
	if (!raw.ok) return raw;
	if (!Number.isFinite(raw.value)) return refuse('These inputs give no finite result.');
	const value = Number(raw.value.toFixed(decimals));
	if (!formula.bandFromEquipment) return ok({ value, used, judgement: null });
	if (!band || !(band.min < band.max))
		return refuse('The equipment has no valid compression band in its data.');
	return ok({
		value,
		used,
		judgement: value < band.min ? 'under' : value > band.max ? 'over' : 'within'
	});
}
