import canonicalize from 'canonicalize';
import { describe, expect, it } from 'vitest';
import { diaphragmReplacement } from '../server/db/demo/procedures';
import {
	blankField,
	cleanContent,
	limitsText,
	newKey,
	procedureContentSchema,
	procedureVersionSignedContent,
	type ProcedureContent
} from './procedure';

const content = (): ProcedureContent => structuredClone(diaphragmReplacement);

describe('procedure content schema', () => {
	it('accepts the demo diaphragm replacement procedure', () => {
		expect(procedureContentSchema.safeParse(diaphragmReplacement).success).toBe(true);
	});
	it('refuses a number field without a unit, and limits that make no sense', () => {
		const c = content();
		c.steps[0]!.fields = [
			{ ...blankField('f-1'), label: 'Gap', unit: '' },
			{ ...blankField('f-2'), label: 'Flow', unit: 'L/min', limitType: 'range', min: 5, max: 2 },
			{
				...blankField('f-3'),
				label: 'Torque',
				unit: 'N·m',
				limitType: 'target',
				target: 6,
				tolerance: 0
			}
		];
		const result = procedureContentSchema.safeParse(c);
		expect(result.success).toBe(false);
		const paths = result.error!.issues.map((i) => i.path.join('.'));
		expect(paths).toContain('steps.0.fields.0.unit');
		expect(paths).toContain('steps.0.fields.1.max');
		expect(paths).toContain('steps.0.fields.2.tolerance');
	});
	it('refuses blank titles, duplicate keys, a choice with one option and NUL characters', () => {
		const c = content();
		c.steps[1]!.title = '   ';
		c.steps[2]!.key = c.steps[3]!.key;
		c.steps[0]!.fields[0] = { ...blankField('x', 'choice'), label: 'Pick', options: ['only'] };
		c.steps[0]!.instruction = 'bad\u0000text';
		const paths = procedureContentSchema.safeParse(c).error!.issues.map((i) => i.path.join('.'));
		expect(paths).toEqual(
			expect.arrayContaining([
				'steps.1.title',
				'steps',
				'steps.0.fields.0.options',
				'steps.0.instruction'
			])
		);
	});
	it('refuses a limit written with more decimals than the field shows (the signer must see it whole)', () => {
		const c = content();
		c.steps[0]!.fields = [
			{
				...blankField('f-1'),
				label: 'Gap',
				unit: 'mm',
				decimals: 1,
				limitType: 'range',
				min: 2.04,
				max: 3.5
			}
		];
		const paths = procedureContentSchema.safeParse(c).error!.issues.map((i) => i.path.join('.'));
		expect(paths).toEqual(['steps.0.fields.0.min']);
		c.steps[0]!.fields[0]!.decimals = 2;
		expect(procedureContentSchema.safeParse(c).success).toBe(true);
	});
	it('needs at least one step', () => {
		expect(procedureContentSchema.safeParse({ ...content(), steps: [] }).success).toBe(false);
	});
});

describe('cleanContent', () => {
	it('drops what a field’s kind does not use, so the same meaning is stored the same way', () => {
		const f = {
			...blankField('f-1', 'pass_fail'),
			label: 'Done',
			unit: 'mm',
			min: 3,
			options: ['a']
		};
		const cleaned = cleanContent({
			...content(),
			steps: [{ ...content().steps[0]!, fields: [f] }]
		});
		expect(cleaned.steps[0]!.fields[0]).toMatchObject({
			unit: '',
			min: null,
			options: [],
			limitType: 'none'
		});
	});
	it('is idempotent', () => {
		const once = cleanContent(content());
		expect(cleanContent(once)).toEqual(once);
	});
});

describe('procedureVersionSignedContent (ES3: the signed content of a procedure version)', () => {
	const signed = (c: ProcedureContent, revision = 1) =>
		canonicalize(
			procedureVersionSignedContent({ code: 'MP-DV-01', version: 2, revision, content: c })
		);
	it('is the same for the same content however its fields were typed', () => {
		const c = content();
		const messy = content();
		messy.steps[0]!.fields[0] = { ...messy.steps[0]!.fields[0]!, unit: 'ignored', min: 7 };
		expect(signed(messy)).toBe(signed(c));
	});
	it('changes with any word of a step, a limit, the revision or the order of steps', () => {
		const base = signed(content());
		const words = content();
		words.steps[3]!.instruction += ' Check twice.';
		const limit = content();
		limit.steps[10]!.fields[1]!.min = 41;
		const order = content();
		order.steps.reverse();
		for (const other of [signed(words), signed(limit), signed(order), signed(content(), 2)])
			expect(other).not.toBe(base);
	});
});

describe('limitsText', () => {
	const f = { ...blankField('f'), unit: 'mm', decimals: 2 };
	it('writes range, one-sided and target limits with the field’s decimals', () => {
		expect(limitsText({ ...f, limitType: 'range', min: 2, max: 3.5 })).toBe('2.00 – 3.50 mm');
		expect(limitsText({ ...f, limitType: 'range', min: 2, max: null })).toBe('at least 2.00 mm');
		expect(limitsText({ ...f, limitType: 'range', min: null, max: 40 })).toBe('at most 40.00 mm');
		expect(limitsText({ ...f, limitType: 'target', target: 40, tolerance: 2 })).toBe(
			'40.00 ± 2.00 mm'
		);
		expect(limitsText({ ...f, limitType: 'none' })).toBe('');
	});
});

describe('newKey', () => {
	it('gives the first free key', () => {
		expect(newKey('step', ['step-1', 'step-3'])).toBe('step-2');
	});
});
