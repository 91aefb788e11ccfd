import { describe, expect, it } from 'vitest';
import { hashOptions, hashPassword, passwordProblems, verifyPassword } from './passwords';

// REQUIREMENTS SE1–SE4. Sources: NIST SP 800-63B-4 §3.1.1.2 (length ≥ 15 for single-factor
// passwords, accept ≥ 64, no composition rules, blocklist, normalisation); OWASP ASVS 5.0.0
// 6.2.1, 6.2.4, 6.2.9, 6.2.11–12; OWASP Password Storage Cheat Sheet (argon2id m=19456, t=2, p=1).
describe('password rules', () => {
	it('SE1: 14 characters are refused, 15 accepted, 64 accepted', () => {
		expect(passwordProblems('tidal-copper-x')).toEqual([
			'Use at least 15 characters (this has 14). A few unrelated words make a good passphrase.'
		]);
		expect(passwordProblems('tidal-copper-xy')).toEqual([]);
		const sixtyFour = 'marble orchard lantern velvet compass thistle harbour quietly no';
		expect([...sixtyFour]).toHaveLength(64);
		expect(passwordProblems(sixtyFour)).toEqual([]);
	});

	it('SE1: counts characters as Unicode code points, not bytes or UTF-16 units', () => {
		// 15 code points, 30 UTF-16 units: accepted; 14 emoji: refused.
		expect(passwordProblems('🔧'.repeat(7) + '🪛🔩🧰🧯🧪🧫🧬🧲'.slice(0, 16))).toEqual([]);
		expect(passwordProblems('🔧🔩🧰🧯🧪🧫🧬🧲🪛🪜🪝🪞🪟🪠')[0]).toMatch(
			/at least 15 characters \(this has 14\)/
		);
	});

	it('SE3: no composition rules — an all-lowercase passphrase with spaces is fine', () => {
		expect(passwordProblems('river stone under morning fog')).toEqual([]);
	});

	it('SE2: a well-known weak password of 15+ characters is refused with a reason', () => {
		// In the "passwords-common" list of @zxcvbn-ts/language-common 4.1.
		expect(passwordProblems('123456789987654321')).toEqual([
			'This is one of the most common passwords. Choose something others would not guess.'
		]);
		expect(passwordProblems('1qaz2wsx3edc4rfv')[0]).toMatch(/most common passwords/);
	});

	it('SE2: repeated and sequential patterns, and padded common passwords, are refused', () => {
		expect(passwordProblems('tulipstulipstulips')[0]).toMatch(/repeated pattern/);
		expect(passwordProblems('aaaaaaaaaaaaaaaa')[0]).toMatch(/repeated pattern/);
		expect(passwordProblems('abcdefghijklmnop')[0]).toMatch(/consecutive characters/);
		expect(passwordProblems('9876543210987654')[0]).toMatch(/consecutive characters/);
		expect(passwordProblems('password12345678')[0]).toMatch(/digits or symbols added/);
		expect(passwordProblems('!!!sunshine!!!2026')[0]).toMatch(/digits or symbols added/);
	});

	it('SE2: context-specific words — the product name, the username, the person’s name', () => {
		expect(passwordProblems('my countersign passphrase')).toEqual([
			'Do not use the name of this application in your password.'
		]);
		expect(passwordProblems('CounterSign-is-where-I-sign')).toContain(
			'Do not use the name of this application in your password.'
		);
		expect(passwordProblems('tech1 walks the long corridor', { username: 'tech1' })).toEqual([
			'Do not use your username in your password.'
		]);
		expect(
			passwordProblems('greetings from aurelia today', { fullName: 'Aurelia Fenwick' })
		).toEqual(['Do not use your own name in your password.']);
	});

	it('refuses more than 256 characters', () => {
		expect(passwordProblems('x y '.repeat(65))).toEqual(['Use at most 256 characters.']);
	});
});

describe('password hashing', () => {
	it('SE4: argon2id, v=19, m=19456 KiB, t=2, p=1 (OWASP Password Storage Cheat Sheet minimum)', async () => {
		const hash = await hashPassword('lantern-harbour-orbit');
		const match = /^\$argon2id\$v=19\$([^$]+)\$/.exec(hash);
		expect(match).not.toBeNull();
		const params = Object.fromEntries(match![1]!.split(',').map((kv) => kv.split('=')));
		expect(Number(params.m)).toBeGreaterThanOrEqual(19456);
		expect(Number(params.t)).toBeGreaterThanOrEqual(2);
		expect(Number(params.p)).toBeGreaterThanOrEqual(1);
		expect(hashOptions).toMatchObject({ memoryCost: 19456, timeCost: 2, parallelism: 1 });
	});

	it('verifies the right password only, and salts every hash', async () => {
		const a = await hashPassword('lantern-harbour-orbit');
		const b = await hashPassword('lantern-harbour-orbit');
		expect(a).not.toBe(b);
		expect(await verifyPassword(a, 'lantern-harbour-orbit')).toBe(true);
		expect(await verifyPassword(a, 'lantern-harbour-orbiT')).toBe(false);
		expect(await verifyPassword('not a hash', 'anything')).toBe(false);
	});

	it('normalises to NFKC: a composed and a decomposed "é" are the same password (NIST SP 800-63B-4)', async () => {
		const composed = 'caf\u00e9 on the quay at dawn';
		const decomposed = 'cafe\u0301 on the quay at dawn';
		expect(composed).not.toBe(decomposed);
		expect(await verifyPassword(await hashPassword(composed), decomposed)).toBe(true);
	});
});
