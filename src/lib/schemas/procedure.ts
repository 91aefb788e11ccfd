import { z } from 'zod';
import { formulas, feeds } from '../calc/formulas';
import { equipmentClasses } from '../equipment';
import { isStorableText, unstorableTextMessage } from './text';

/**
 * The content of a procedure version (maintenance instruction): its steps, their cautions and
 * their typed fields. One schema for the editor in the browser and the server that stores it.
 * A draft is saved as a whole; an approved version is never changed (MR1, MR5).
 *
 * A field is one flat object for every kind, so that changing its kind in the editor loses
 * nothing; `cleanContent` sets what a kind does not use to null before it is stored, so the
 * stored content (and the signature over it) is the same however it was typed.
 */
export const hazards = [
	'stored_energy',
	'pressure',
	'steam_hot_surface',
	'chemical',
	'electrical'
] as const;
export type Hazard = (typeof hazards)[number];
export const hazardLabels: Record<Hazard, string> = {
	stored_energy: 'Stored energy',
	pressure: 'Pressure',
	steam_hot_surface: 'Steam or hot surface',
	chemical: 'Chemical',
	electrical: 'Electrical'
};

export const fieldKinds = [
	'number',
	'text',
	'pass_fail',
	'choice',
	'part_lot',
	'instrument',
	'photo',
	'calculated',
	'tightening'
] as const;
export type FieldKind = (typeof fieldKinds)[number];
export const fieldKindLabels: Record<FieldKind, string> = {
	number: 'Number',
	text: 'Text',
	pass_fail: 'Pass / fail',
	choice: 'Choice',
	part_lot: 'Part lot',
	instrument: 'Reference instrument',
	photo: 'Photo',
	calculated: 'Calculated',
	tightening: 'Tightening'
};

export const limitTypes = ['none', 'range', 'target'] as const;
export type LimitType = (typeof limitTypes)[number];

/** Calculations a field can show: the formulas of src/lib/calc/formulas.ts. */
export const calculations = ['diaphragm_compression', 'flow_coefficient'] as const;
export type Calculation = (typeof calculations)[number] & keyof typeof formulas;
export const calculationLabels: Record<Calculation, string> = {
	diaphragm_compression: 'Diaphragm compression (% of thickness)',
	flow_coefficient: 'Flow coefficient Kv'
};

/**
 * How a tightening field guides the passes: the full sequence (snug, about 30 %, 70 %, 100 %,
 * then circular at 100 %) or one check pass at the final torque (the re-tightening check).
 */
export const tighteningPatterns = ['full', 'check'] as const;
export type TighteningPattern = (typeof tighteningPatterns)[number];
export const tighteningPatternLabels: Record<TighteningPattern, string> = {
	full: 'Full tightening: snug, about 30 %, 70 %, 100 %, then a circular pass',
	check: 'Check pass at the final torque, in the cross pattern'
};

const words = (label: string, max: number) =>
	z
		.string({ error: `Enter the ${label}.` })
		.trim()
		.min(1, `Enter the ${label}.`)
		.max(max, `Keep the ${label} under ${max} characters.`)
		.refine(isStorableText, unstorableTextMessage);
const optionalWords = (max: number) =>
	z
		.string()
		.trim()
		.max(max, `Keep it under ${max} characters.`)
		.refine(isStorableText, unstorableTextMessage);
const finite = z.number().finite('Enter a number.');

/** Stable keys tie entries (5/10) and comparisons to a step or field across versions. */
export const keySchema = z
	.string()
	.regex(/^[a-z0-9][a-z0-9-]{0,39}$/, 'Keys are short lowercase ids.');

export const fieldSchema = z
	.object({
		key: keySchema,
		label: words('field label', 120),
		kind: z.enum(fieldKinds, { error: 'Choose the kind of field.' }),
		required: z.boolean(),
		hint: optionalWords(300),
		unit: optionalWords(20),
		decimals: z.number().int().min(0, 'At least 0 decimals.').max(6, 'At most 6 decimals.'),
		limitType: z.enum(limitTypes),
		min: finite.nullable(),
		max: finite.nullable(),
		target: finite.nullable(),
		tolerance: finite.nullable(),
		options: z.array(words('option', 80)).max(20, 'At most 20 options.'),
		instrumentKind: optionalWords(40),
		calculation: z.enum(calculations).nullable(),
		/** Calculated fields: the keys of the step's number fields that feed the formula, in its order. */
		inputs: z.array(keySchema).max(4).default([]),
		/** Tightening fields: the passes the field guides. */
		pattern: z.enum(tighteningPatterns).default('full')
	})
	.superRefine((f, ctx) => {
		const need = (path: string, message: string) =>
			ctx.addIssue({ code: 'custom', path: [path], message });
		if (hasLimits(f)) {
			if (f.kind === 'number' && !f.unit)
				need('unit', 'Give the unit (for example mm, N·m, L/min).');
			// A limit is shown with the field's decimals: it must not hide digits the signer cannot see.
			for (const key of ['min', 'max', 'target', 'tolerance'] as const) {
				const v = f[key];
				if (v !== null && Number(v.toFixed(f.decimals)) !== v)
					need(key, `Write this with at most ${f.decimals} decimals, or allow more decimals.`);
			}
			if (f.limitType === 'range') {
				if (f.min === null && f.max === null) need('min', 'Give a minimum, a maximum or both.');
				if (f.min !== null && f.max !== null && f.min > f.max)
					need('max', 'The maximum must not be below the minimum.');
			}
			if (f.limitType === 'target') {
				if (f.target === null) need('target', 'Give the target value.');
				if (f.tolerance === null || f.tolerance <= 0)
					need('tolerance', 'Give a tolerance above zero (target ± tolerance).');
			}
		}
		if (f.kind === 'choice') {
			if (f.options.length < 2) need('options', 'A choice needs at least two options.');
			if (new Set(f.options).size !== f.options.length) need('options', 'Options must differ.');
		}
		if (f.kind === 'instrument' && !f.instrumentKind)
			need('instrumentKind', 'Say which kind of instrument (for example flow meter).');
		if (f.kind === 'calculated' && !f.calculation) need('calculation', 'Choose the calculation.');
		// A compression takes the valve's band: limits left from another kind are dropped by cleanField.
	});
export type ProcedureField = z.infer<typeof fieldSchema>;

export const cautionSchema = z.object({
	hazard: z.enum(hazards, { error: 'Choose the hazard.' }),
	text: words('caution', 600)
});
export type Caution = z.infer<typeof cautionSchema>;

export const stepSchema = z
	.object({
		key: keySchema,
		title: words('step title', 120),
		instruction: words('instruction', 4000),
		cautions: z.array(cautionSchema).max(10, 'At most 10 cautions on a step.'),
		verificationRequired: z.boolean(),
		fields: z.array(fieldSchema).max(30, 'At most 30 fields on a step.')
	})
	.superRefine((s, ctx) => {
		const keys = s.fields.map((f) => f.key);
		if (new Set(keys).size !== keys.length)
			ctx.addIssue({ code: 'custom', path: ['fields'], message: 'Two fields share a key.' });
		// A calculated field names, in the formula's order, number fields of this step in a unit that converts.
		s.fields.forEach((f, j) => {
			if (f.kind !== 'calculated' || !f.calculation) return;
			const wanted = formulas[f.calculation].inputs;
			const path = ['fields', j, 'inputs'];
			if (f.inputs.length !== wanted.length)
				return ctx.addIssue({
					code: 'custom',
					path,
					message: `Choose the ${wanted.length} fields this calculation reads: ${wanted.map((w) => w.label.toLowerCase()).join(', ')}.`
				});
			wanted.forEach((w, i) => {
				const source = s.fields.find((x) => x.key === f.inputs[i]);
				if (!source || source.kind !== 'number')
					ctx.addIssue({
						code: 'custom',
						path: [...path, i],
						message: `Choose a number field of this step for the ${w.label.toLowerCase()}.`
					});
				else if (!feeds(source.unit, w))
					ctx.addIssue({
						code: 'custom',
						path: [...path, i],
						message: `“${source.label}” is in ${source.unit}, which does not convert to ${w.unit} for the ${w.label.toLowerCase()}.`
					});
			});
			if (new Set(f.inputs).size !== f.inputs.length)
				ctx.addIssue({ code: 'custom', path, message: 'Choose a different field for each input.' });
		});
	});
export type ProcedureStep = z.infer<typeof stepSchema>;

export const procedureContentSchema = z
	.object({
		title: words('title', 160),
		appliesTo: z.enum(equipmentClasses).nullable(),
		purpose: optionalWords(2000),
		/** Code of a procedure that follows after the first steam sterilisation (for example a re-tightening check). */
		followUpCode: z
			.string()
			.trim()
			.max(40)
			.refine(isStorableText, unstorableTextMessage)
			.nullable(),
		steps: z
			.array(stepSchema)
			.min(1, 'A procedure has at least one step.')
			.max(60, 'At most 60 steps.')
	})
	.superRefine((c, ctx) => {
		const keys = c.steps.map((s) => s.key);
		if (new Set(keys).size !== keys.length)
			ctx.addIssue({ code: 'custom', path: ['steps'], message: 'Two steps share a key.' });
		// These fields read the diaphragm valve's own data (material code, fasteners, compression band).
		if (c.appliesTo !== 'diaphragm_valve')
			c.steps.forEach((s, i) =>
				s.fields.forEach((f, j) => {
					if (valveOnly(f))
						ctx.addIssue({
							code: 'custom',
							path: ['steps', i, 'fields', j, 'kind'],
							message:
								'This kind of field needs a diaphragm valve’s data: set “Applies to” to Diaphragm valve.'
						});
				})
			);
	});
export type ProcedureContent = z.infer<typeof procedureContentSchema>;

/** Fields that read a diaphragm valve's data: part lots (material code), tightening (fasteners), compression. */
export const valveOnly = (f: { kind: FieldKind; calculation: Calculation | null }) =>
	f.kind === 'part_lot' ||
	f.kind === 'tightening' ||
	(f.kind === 'calculated' && f.calculation === 'diaphragm_compression');

/** Fields judged against limits of their own: numbers and a calculated Kv. */
export const hasLimits = (f: Pick<ProcedureField, 'kind' | 'calculation'>) =>
	f.kind === 'number' || (f.kind === 'calculated' && f.calculation === 'flow_coefficient');

/** What each kind of field uses; everything else is stored as null (or empty). */
export function cleanField(f: ProcedureField): ProcedureField {
	// A calculated Kv carries limits like a number; a calculated compression takes the valve's band.
	const number = hasLimits(f);
	const formula = f.kind === 'calculated' && f.calculation ? formulas[f.calculation] : null;
	return {
		key: f.key,
		label: f.label,
		kind: f.kind,
		required: f.kind === 'calculated' ? false : f.required,
		hint: f.hint,
		unit: formula ? formula.unit : number ? f.unit : '',
		decimals: number || f.kind === 'calculated' ? f.decimals : 0,
		limitType: number ? f.limitType : 'none',
		min: number && f.limitType === 'range' ? f.min : null,
		max: number && f.limitType === 'range' ? f.max : null,
		target: number && f.limitType === 'target' ? f.target : null,
		tolerance: number && f.limitType === 'target' ? f.tolerance : null,
		options: f.kind === 'choice' ? f.options : [],
		instrumentKind: f.kind === 'instrument' ? f.instrumentKind : '',
		calculation: f.kind === 'calculated' ? f.calculation : null,
		inputs: f.kind === 'calculated' ? [...(f.inputs ?? [])] : [],
		pattern: f.kind === 'tightening' ? (f.pattern ?? 'full') : 'full'
	};
}

export function cleanContent(c: ProcedureContent): ProcedureContent {
	return {
		title: c.title,
		appliesTo: c.appliesTo,
		purpose: c.purpose,
		followUpCode: c.followUpCode ? c.followUpCode.toUpperCase() : null,
		steps: c.steps.map((s) => ({
			key: s.key,
			title: s.title,
			instruction: s.instruction,
			cautions: s.cautions.map((k) => ({ hazard: k.hazard, text: k.text })),
			verificationRequired: s.verificationRequired,
			fields: s.fields.map(cleanField)
		}))
	};
}

/** A new field of the given kind with everything else blank. */
export function blankField(key: string, kind: FieldKind = 'number'): ProcedureField {
	return {
		key,
		label: '',
		kind,
		required: true,
		hint: '',
		unit: '',
		decimals: 0,
		limitType: 'none',
		min: null,
		max: null,
		target: null,
		tolerance: null,
		options: [],
		instrumentKind: '',
		calculation: null,
		inputs: [],
		pattern: 'full'
	};
}

export function blankStep(key: string): ProcedureStep {
	return { key, title: '', instruction: '', cautions: [], verificationRequired: false, fields: [] };
}

/** The limits of a number field in words, e.g. "2.0 – 3.5 mm" or "40 ± 2 L/min". */
export function limitsText(f: ProcedureField): string {
	if (!hasLimits(f) || f.limitType === 'none') return '';
	const n = (v: number) => v.toFixed(f.decimals);
	if (f.limitType === 'target' && f.target !== null && f.tolerance !== null)
		return `${n(f.target)} ± ${n(f.tolerance)} ${f.unit}`;
	if (f.min !== null && f.max !== null) return `${n(f.min)} – ${n(f.max)} ${f.unit}`;
	if (f.min !== null) return `at least ${n(f.min)} ${f.unit}`;
	if (f.max !== null) return `at most ${n(f.max)} ${f.unit}`;
	return '';
}

/** A short random key for a new step or field (unique within its list, checked by the schema). */
export function newKey(prefix: string, taken: Iterable<string>): string {
	const used = new Set(taken);
	for (let i = 1; ; i++) {
		const key = `${prefix}-${i}`;
		if (!used.has(key)) return key;
	}
}

/**
 * The canonical content of a procedure version for its approval signature (3/10: each kind of
 * signed record defines it in exactly one tested function): the procedure's code, the version
 * number, the revision approved and the whole cleaned content.
 */
export function procedureVersionSignedContent(input: {
	code: string;
	version: number;
	revision: number;
	content: ProcedureContent;
}) {
	const content = cleanContent(input.content);
	return {
		procedure: input.code,
		version: input.version,
		revision: input.revision,
		// The keys added in 6/10 appear only where they mean something, so that content approved
		// before them keeps the signed form it was approved with.
		content: {
			...content,
			steps: content.steps.map((s) => ({
				...s,
				fields: s.fields.map(({ inputs, pattern, ...f }) => ({
					...f,
					...(inputs.length ? { inputs } : {}),
					...(pattern !== 'full' ? { pattern } : {})
				}))
			}))
		}
	};
}

/**
 * The editor's form: `fromRevision` 0 with a `code` creates a procedure; above 0 it is the
 * revision of the draft the person edited (a save on top of someone else's is refused).
 */
export const procedureFormSchema = z.object({
	code: z
		.string()
		.trim()
		.toUpperCase()
		.refine((c) => c === '' || /^[A-Z][A-Z0-9]{0,9}(-[A-Z0-9]{1,10}){0,3}$/.test(c), {
			message: 'Use a code like MP-DV-01: letters and digits in groups joined by hyphens.'
		}),
	fromRevision: z.number().int().min(0),
	content: procedureContentSchema
});
