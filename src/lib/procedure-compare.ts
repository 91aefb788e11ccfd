import { equipmentClassLabels, type EquipmentClass } from './equipment';
import {
	calculationLabels,
	fieldKindLabels,
	hazardLabels,
	limitsText,
	tighteningPatternLabels,
	type Calculation,
	type FieldKind,
	type Hazard,
	type ProcedureContent,
	type ProcedureField,
	type ProcedureStep
} from './schemas/procedure';

/**
 * What changed between two versions of a procedure, field by field (MR5): steps and fields are
 * matched by their stable keys, so a reordered step shows as moved, not as removed and added.
 */
export type Change = {
	/** Where: "Procedure", "Step 3 · Remove the bonnet", "Step 3 · Field “Gap”". */
	place: string;
	/** What: "Title", "Unit", "Cautions", "Step", "Field". */
	what: string;
	kind: 'added' | 'removed' | 'changed' | 'moved';
	before: string;
	after: string;
};

const yesNo = (v: boolean) => (v ? 'Yes' : 'No');

/**
 * Keys that moved: those outside a longest common subsequence of the two orders, so moving one
 * step to the end marks that step alone as moved, not every step it passed.
 */
export function movedKeys(before: string[], after: string[]): Set<string> {
	const n = before.length;
	const m = after.length;
	const len: number[][] = Array.from({ length: n + 1 }, () => new Array<number>(m + 1).fill(0));
	for (let i = n - 1; i >= 0; i--)
		for (let j = m - 1; j >= 0; j--)
			len[i]![j] =
				before[i] === after[j]
					? len[i + 1]![j + 1]! + 1
					: Math.max(len[i + 1]![j]!, len[i]![j + 1]!);
	const kept = new Set<string>();
	for (let i = 0, j = 0; i < n && j < m;) {
		if (before[i] === after[j]) {
			kept.add(before[i]!);
			i++;
			j++;
		} else if (len[i + 1]![j]! >= len[i]![j + 1]!) i++;
		else j++;
	}
	return new Set(after.filter((k) => !kept.has(k)));
}

const cautionsText = (step: ProcedureStep) =>
	step.cautions.map((c) => `${hazardLabels[c.hazard as Hazard]}: ${c.text}`).join('\n');

function fieldFacts(f: ProcedureField): [string, string][] {
	const facts: [string, string][] = [
		['Label', f.label],
		['Kind', fieldKindLabels[f.kind as FieldKind]],
		['Required', yesNo(f.required)],
		['Hint', f.hint]
	];
	if (f.kind === 'number' || f.kind === 'calculated')
		facts.push(['Unit', f.unit], ['Decimals', String(f.decimals)]);
	if (f.kind === 'number' || (f.kind === 'calculated' && f.calculation === 'flow_coefficient'))
		facts.push(['Limits', limitsText(f) || 'none']);
	if (f.kind === 'choice') facts.push(['Options', f.options.join(' · ')]);
	if (f.kind === 'instrument') facts.push(['Instrument kind', f.instrumentKind]);
	if (f.kind === 'calculated')
		facts.push(
			['Calculation', f.calculation ? calculationLabels[f.calculation as Calculation] : ''],
			['Inputs', (f.inputs ?? []).join(', ')]
		);
	if (f.kind === 'tightening') facts.push(['Passes', tighteningPatternLabels[f.pattern ?? 'full']]);
	return facts;
}

const fieldSummary = (f: ProcedureField) =>
	fieldFacts(f)
		.filter(([, v]) => v !== '')
		.map(([k, v]) => `${k}: ${v}`)
		.join('; ');

function compareFacts(place: string, a: [string, string][], b: [string, string][], out: Change[]) {
	const before = new Map(a);
	const after = new Map(b);
	for (const key of new Set([...before.keys(), ...after.keys()])) {
		const x = before.get(key) ?? '';
		const y = after.get(key) ?? '';
		if (x !== y) out.push({ place, what: key, kind: 'changed', before: x, after: y });
	}
}

export function compareContents(a: ProcedureContent, b: ProcedureContent): Change[] {
	const out: Change[] = [];
	const classText = (c: string | null) => (c ? equipmentClassLabels[c as EquipmentClass] : 'Any');
	compareFacts(
		'Procedure',
		[
			['Title', a.title],
			['Applies to', classText(a.appliesTo)],
			['Purpose', a.purpose],
			['Follow-up after first steam sterilisation', a.followUpCode ?? '']
		],
		[
			['Title', b.title],
			['Applies to', classText(b.appliesTo)],
			['Purpose', b.purpose],
			['Follow-up after first steam sterilisation', b.followUpCode ?? '']
		],
		out
	);

	const oldSteps = new Map(a.steps.map((s, i) => [s.key, { step: s, n: i + 1 }]));
	const newSteps = new Map(b.steps.map((s, i) => [s.key, { step: s, n: i + 1 }]));
	// Relative order of the steps both versions share: a step moved only if that order changed.
	const sharedOld = a.steps.filter((s) => newSteps.has(s.key)).map((s) => s.key);
	const sharedNew = b.steps.filter((s) => oldSteps.has(s.key)).map((s) => s.key);
	const movedSteps = movedKeys(sharedOld, sharedNew);

	for (const [key, { step, n }] of newSteps) {
		const old = oldSteps.get(key);
		const place = `Step ${n} · ${step.title}`;
		if (!old) {
			out.push({ place, what: 'Step', kind: 'added', before: '', after: step.title });
			continue;
		}
		if (movedSteps.has(key))
			out.push({
				place,
				what: 'Position',
				kind: 'moved',
				before: `Step ${old.n}`,
				after: `Step ${n}`
			});
		compareFacts(
			place,
			[
				['Title', old.step.title],
				['Instruction', old.step.instruction],
				['Cautions', cautionsText(old.step)],
				['Verification required', yesNo(old.step.verificationRequired)]
			],
			[
				['Title', step.title],
				['Instruction', step.instruction],
				['Cautions', cautionsText(step)],
				['Verification required', yesNo(step.verificationRequired)]
			],
			out
		);
		const oldFields = new Map(old.step.fields.map((f) => [f.key, f]));
		const newFields = new Map(step.fields.map((f) => [f.key, f]));
		const sharedOldF = old.step.fields.filter((f) => newFields.has(f.key)).map((f) => f.key);
		const sharedNewF = step.fields.filter((f) => oldFields.has(f.key)).map((f) => f.key);
		const movedFields = movedKeys(sharedOldF, sharedNewF);
		for (const f of step.fields) {
			const before = oldFields.get(f.key);
			const fieldPlace = `${place} · Field “${f.label}”`;
			if (!before) {
				out.push({
					place: fieldPlace,
					what: 'Field',
					kind: 'added',
					before: '',
					after: fieldSummary(f)
				});
				continue;
			}
			if (movedFields.has(f.key))
				out.push({
					place: fieldPlace,
					what: 'Position',
					kind: 'moved',
					before: `Field ${old.step.fields.indexOf(before) + 1}`,
					after: `Field ${step.fields.indexOf(f) + 1}`
				});
			compareFacts(fieldPlace, fieldFacts(before), fieldFacts(f), out);
		}
		for (const f of old.step.fields)
			if (!newFields.has(f.key))
				out.push({
					place: `${place} · Field “${f.label}”`,
					what: 'Field',
					kind: 'removed',
					before: fieldSummary(f),
					after: ''
				});
	}
	for (const [key, { step, n }] of oldSteps)
		if (!newSteps.has(key))
			out.push({
				place: `Step ${n} (old) · ${step.title}`,
				what: 'Step',
				kind: 'removed',
				before: step.title,
				after: ''
			});
	return out;
}
