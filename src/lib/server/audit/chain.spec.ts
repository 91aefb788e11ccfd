import canonicalize from 'canonicalize';
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { canonicalText, chainHash, GENESIS, type ChainFields } from './chain';

// Check values from shared/CHECK-VALUES.md with their published sources.
const sha256 = (data: string | Buffer) => createHash('sha256').update(data).digest('hex');

describe('SHA-256 (FIPS 180-4 examples and NIST additional vectors)', () => {
	it.each([
		['"" (FIPS 180-4)', '', 'e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'],
		[
			'"abc" (FIPS 180-4 example)',
			'abc',
			'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad'
		],
		[
			'448-bit message (FIPS 180-4 example)',
			'abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq',
			'248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1'
		],
		[
			'"a" × 1,000,000 (FIPS 180-4 example)',
			'a'.repeat(1_000_000),
			'cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0'
		]
	])('%s', (_name, input, digest) => {
		expect(sha256(input)).toBe(digest);
	});
	it('one byte 0xbd and 1,000,000 zero bytes (NIST additional vectors)', () => {
		expect(sha256(Buffer.from([0xbd]))).toBe(
			'68325720aabd7c82f30f554b313d0570c95accbb7dc4b5aae11204c08ffe732b'
		);
		expect(sha256(Buffer.alloc(1_000_000))).toBe(
			'd29751f2649b32ff572b5e0a9f541ea660a50f94ff0beedfb0b692b924cc8025'
		);
	});
});

describe('RFC 8785 JSON Canonicalization Scheme (the canonicalize package)', () => {
	it('§3.2.2 example: whitespace, number forms, string escapes', () => {
		const input = JSON.parse(
			'{"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001], "string": "\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/", "literals": [null, true, false]}'
		);
		expect(canonicalize(input)).toBe(
			'{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\\u000f\\nA\'B\\"\\\\\\\\\\"/"}'
		);
	});
	it('§3.2.3: keys sort by UTF-16 code units', () => {
		const input = JSON.parse(
			'{"\\u20ac":1,"\\r":2,"\\ufb33":3,"1":4,"\\ud83d\\ude00":5,"\\u0080":6,"\\u00f6":7}'
		);
		const keys = [...canonicalize(input)!.matchAll(/"([^"]*)":/g)].map((m) =>
			JSON.parse(`"${m[1]}"`)
		);
		expect(keys).toEqual(['\r', '1', '\u0080', 'ö', '€', '😀', '\ufb33']);
	});
	it('Appendix B numbers (IEEE-754 → text)', () => {
		const fromHex = (hex: string) => Buffer.from(hex, 'hex').readDoubleBE(0);
		const cases: [string, string][] = [
			['0000000000000000', '0'],
			['8000000000000000', '0'],
			['0000000000000001', '5e-324'],
			['7fefffffffffffff', '1.7976931348623157e+308'],
			['4340000000000000', '9007199254740992'],
			['44b52d02c7e14af6', '1e+23'],
			['444b1ae4d6e2ef50', '1e+21'],
			['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'],
			['3eb0c6f7a0b5ed8d', '0.000001']
		];
		for (const [hex, text] of cases) expect(canonicalize(fromHex(hex)), hex).toBe(text);
	});
	it('rejects a lone surrogate, NaN and Infinity (CHECK-VALUES.md)', () => {
		expect(() => canonicalize(JSON.parse('{"a":"\\uD800"}'))).toThrow(/surrogate/i);
		expect(() => canonicalize({ a: NaN })).toThrow();
		expect(() => canonicalize({ a: Infinity })).toThrow();
	});
});

describe('the chain hash', () => {
	const fields: ChainFields = {
		seq: 1,
		at: '2026-12-01T18:49:00.123Z',
		actor_kind: 'person',
		actor_id: 'a1',
		actor_name: 'Tomas Verhoek',
		actor_roles: ['technician'],
		action: 'auth.sign_in',
		entity_type: 'account',
		entity_id: 'a1',
		new_values: { username: 'tech1' },
		previous_values: null,
		reason: null,
		client_address: '127.0.0.1'
	};

	it('is SHA-256 over the 32 raw bytes of prev_hash followed by the canonical JSON, as the README says', () => {
		const text =
			'{"action":"auth.sign_in","actor_id":"a1","actor_kind":"person","actor_name":"Tomas Verhoek","actor_roles":["technician"],' +
			'"at":"2026-12-01T18:49:00.123Z","client_address":"127.0.0.1","entity_id":"a1","entity_type":"account",' +
			'"new_values":{"username":"tech1"},"previous_values":null,"reason":null,"seq":1}';
		expect(canonicalText(fields)).toBe(text);
		const expected = createHash('sha256').update(Buffer.alloc(32)).update(text).digest('hex');
		expect(chainHash(GENESIS, fields)).toBe(expected);
	});

	it('changes when any field or the previous hash changes', () => {
		const base = chainHash(GENESIS, fields);
		expect(chainHash(GENESIS, { ...fields, reason: 'x' })).not.toBe(base);
		expect(chainHash(GENESIS, { ...fields, at: '2026-12-01T18:49:00.124Z' })).not.toBe(base);
		expect(chainHash('11'.repeat(32), fields)).not.toBe(base);
	});
});

describe('scripts/verify-export.mjs canonicalises like the canonicalize package (RFC 8785)', async () => {
	const { canonical } = await import('../../../../scripts/verify-export.mjs');
	it.each([
		[
			'§3.2.2 example',
			JSON.parse(
				'{"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001], "string": "\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/", "literals": [null, true, false]}'
			)
		],
		[
			'§3.2.3 key order',
			JSON.parse(
				'{"\\u20ac":1,"\\r":2,"\\ufb33":3,"1":4,"\\ud83d\\ude00":5,"\\u0080":6,"\\u00f6":7}'
			)
		],
		['nested values', { b: [1, { d: null, c: 'x' }], a: { z: true, y: 1e21 } }]
	])('%s', (_name, value) => {
		expect(canonical(value)).toBe(canonicalize(value));
	});
	it('rejects a lone surrogate', () => {
		expect(() => canonical({ a: '\ud800' })).toThrow(/surrogate/);
	});
});

describe('canonicalText writes what canonicalize writes (RFC 8785 via the canonicalize package)', () => {
	it('for events with nested values, unicode names and every field type', async () => {
		const { default: canonicalize } = await import('canonicalize');
		const samples: ChainFields[] = [
			{
				seq: 1,
				at: '2026-12-01T10:00:00.000Z',
				actor_kind: 'person',
				actor_id: '2b0c7a4e-1d2f-4a51-9b1e-0c2f3e4d5a6b',
				actor_name: 'Zoë Ångström "quoted" \\ back\nline',
				actor_roles: ['technician', 'quality'],
				action: 'step.perform',
				entity_type: 'step',
				entity_id: 'wo-1/3',
				new_values: {
					b: 1,
					a: [1.5, 'x', null, true],
					é: { z: 0, '\u20ac': -0.000001 },
					'1': 1e21
				},
				previous_values: null,
				reason: null,
				client_address: '198.51.100.7'
			},
			{
				seq: 9007199254740991,
				at: '1999-12-31T23:59:59.999Z',
				actor_kind: 'system',
				actor_id: null,
				actor_name: 'system: PM scheduler',
				actor_roles: [],
				action: 'x',
				entity_type: 'y',
				entity_id: null,
				new_values: {},
				previous_values: { '\ud83d\ude00': 'emoji key', '': '' },
				reason: 'Typing error at entry',
				client_address: null
			}
		];
		for (const fields of samples) expect(canonicalText(fields)).toBe(canonicalize(fields));
	});
	it('refuses a lone surrogate and non-finite numbers anywhere', () => {
		const base: ChainFields = {
			seq: 1,
			at: '2026-12-01T10:00:00.000Z',
			actor_kind: 'person',
			actor_id: null,
			actor_name: 'a',
			actor_roles: [],
			action: 'a',
			entity_type: 'e',
			entity_id: null,
			new_values: null,
			previous_values: null,
			reason: null,
			client_address: null
		};
		expect(() => canonicalText({ ...base, reason: 'x\ud800' })).toThrow();
		expect(() => canonicalText({ ...base, new_values: { v: Number.NaN } })).toThrow();
		expect(() => canonicalText({ ...base, seq: Number.POSITIVE_INFINITY })).toThrow();
	});
});
