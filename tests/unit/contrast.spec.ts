import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';

// Colour contrast of the theme tokens in src/app.css, computed with the WCAG 2.2 formulas
// (relative luminance, §1.4.3 "Contrast (Minimum)": 4.5:1 for normal text, 3:1 for large text
// and for user-interface components, §1.4.11). Source: W3C WCAG 2.2, definitions of
// "relative luminance" and "contrast ratio".
function luminance(hex: string) {
	const [r, g, b] = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16) / 255);
	const lin = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
	return 0.2126 * lin(r!) + 0.7152 * lin(g!) + 0.0722 * lin(b!);
}
const contrast = (a: string, b: string) => {
	const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
	return (hi! + 0.05) / (lo! + 0.05);
};

const css = readFileSync(new URL('../../src/app.css', import.meta.url), 'utf8');
const tokens = Object.fromEntries(
	[...css.matchAll(/--color-([\w-]+):\s*(#[0-9a-f]{6})/gi)].map((m) => [m[1], m[2]])
);
const token = (name: string) => {
	const value = tokens[name];
	if (!value) throw new Error(`no --color-${name} in app.css`);
	return value;
};

describe('the contrast formula', () => {
	it('gives 21:1 for black on white and 1:1 for a colour on itself (WCAG 2.2 definition)', () => {
		expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 5);
		expect(contrast('#1d5c57', '#1d5c57')).toBe(1);
	});
	it('gives 4.54:1 for #767676 on white, the lightest grey that passes AA (common practice, from memory)', () => {
		expect(contrast('#767676', '#ffffff')).toBeCloseTo(4.54, 2);
	});
});

describe('Countersign theme tokens', () => {
	const text = ['ink', 'ink-muted', 'accent', 'accent-strong', 'ok', 'caution', 'stop'];
	const grounds = ['paper', 'sheet'];
	for (const fg of text) {
		for (const bg of grounds) {
			it(`${fg} on ${bg} reaches 4.5:1 (WCAG 2.2 §1.4.3)`, () => {
				expect(contrast(token(fg), token(bg))).toBeGreaterThanOrEqual(4.5);
			});
		}
	}
	for (const [fg, bg] of [
		['ink', 'accent-soft'],
		['accent-strong', 'accent-soft'],
		['ink', 'caution-soft'],
		['caution', 'caution-soft'],
		['ok', 'ok-soft'],
		['stop', 'stop-soft']
	] as const) {
		it(`${fg} on ${bg} reaches 4.5:1`, () => {
			expect(contrast(token(fg), token(bg))).toBeGreaterThanOrEqual(4.5);
		});
	}
	for (const bg of ['paper', 'sheet'])
		it(`input borders (rule-strong) stand out from ${bg} by 3:1 (WCAG 2.2 §1.4.11)`, () => {
			expect(contrast(token('rule-strong'), token(bg))).toBeGreaterThanOrEqual(3);
		});
	it('the focus ring (accent) stands out from the ground by 3:1 (WCAG 2.2 §1.4.11)', () => {
		expect(contrast(token('accent'), token('paper'))).toBeGreaterThanOrEqual(3);
	});
});
