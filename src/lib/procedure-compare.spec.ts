import { describe, expect, it } from 'vitest';
import { retighteningCheck } from './server/db/demo/procedures';
import { compareContents, movedKeys } from './procedure-compare';
import { blankField, blankStep, type ProcedureContent } from './schemas/procedure';

const base = (): ProcedureContent => structuredClone(retighteningCheck);

describe('movedKeys', () => {
	it('marks only what left the longest common order', () => {
		expect([...movedKeys(['a', 'b', 'c', 'd'], ['b', 'c', 'd', 'a'])]).toEqual(['a']);
		expect([...movedKeys(['a', 'b', 'c'], ['a', 'b', 'c'])]).toEqual([]);
		expect(movedKeys(['a', 'b', 'c', 'd'], ['d', 'c', 'b', 'a']).size).toBe(3);
	});
});

describe('compareContents (MR5: what changed between two versions)', () => {
	it('finds nothing between equal contents', () => {
		expect(compareContents(base(), base())).toEqual([]);
	});
	it('names a changed limit field by field, with before and after', () => {
		const next = base();
		next.steps[0]!.fields[1]!.max = 35;
		expect(compareContents(base(), next)).toEqual([
			{
				place:
					'Step 1 · Let the valve cool and isolate it · Field “Valve body surface temperature”',
				what: 'Limits',
				kind: 'changed',
				before: 'at most 40 °C',
				after: 'at most 35 °C'
			}
		]);
	});
	it('shows an added step, a removed field and a moved step', () => {
		const next = base();
		next.steps.push({ ...blankStep('extra'), title: 'Sign the handover', instruction: 'Sign.' });
		next.steps[1]!.fields.pop();
		[next.steps[0], next.steps[1]] = [next.steps[1]!, next.steps[0]!];
		const changes = compareContents(base(), next);
		expect(changes).toContainEqual(
			expect.objectContaining({ what: 'Step', kind: 'added', after: 'Sign the handover' })
		);
		expect(changes).toContainEqual(
			expect.objectContaining({
				what: 'Field',
				kind: 'removed',
				place: expect.stringContaining('A fastener turned')
			})
		);
		// Two steps swapped: one of them moved past the other.
		expect(changes.filter((c) => c.kind === 'moved')).toHaveLength(1);
	});
	it('shows a new field with its facts, and a changed caution and flag', () => {
		const next = base();
		next.steps[2]!.fields.push({
			...blankField('torque'),
			label: 'Torque',
			unit: 'N·m',
			limitType: 'target',
			target: 6,
			tolerance: 0.5,
			decimals: 1
		});
		next.steps[2]!.verificationRequired = true;
		next.steps[0]!.cautions[0]!.text = 'Let it cool for 30 minutes.';
		const changes = compareContents(base(), next);
		expect(changes).toContainEqual(
			expect.objectContaining({
				what: 'Field',
				kind: 'added',
				after: expect.stringContaining('Limits: 6.0 ± 0.5 N·m')
			})
		);
		expect(changes).toContainEqual(
			expect.objectContaining({ what: 'Verification required', before: 'No', after: 'Yes' })
		);
		expect(changes).toContainEqual(expect.objectContaining({ what: 'Cautions', kind: 'changed' }));
	});
});
