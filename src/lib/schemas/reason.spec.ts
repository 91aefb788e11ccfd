import { describe, expect, it } from 'vitest';
import { reasonSchema } from './reason';

// REQUIREMENTS AT2 (EU GMP Annex 11 §9): a reason for every change; empty or blank is refused.
describe('reasonSchema', () => {
	it.each(['', '   ', '\t\n', '\u00a0\u2003'])(
		'refuses the blank reason %j with a clear message',
		(reason) => {
			const result = reasonSchema.safeParse(reason);
			expect(result.success).toBe(false);
			expect(result.error?.issues[0]?.message).toBe(
				'Give a reason: it is kept in the audit trail.'
			);
		}
	);
	it('refuses a missing reason with the same message', () => {
		expect(reasonSchema.safeParse(undefined).error?.issues[0]?.message).toBe(
			'Give a reason: it is kept in the audit trail.'
		);
	});
	it('trims and keeps a real reason; refuses more than 500 characters', () => {
		expect(reasonSchema.parse('  Typing error at entry ')).toBe('Typing error at entry');
		expect(reasonSchema.safeParse('x'.repeat(501)).success).toBe(false);
	});
});
