import { describe, expect, it } from 'vitest';
import {
	consistencyProof,
	inclusionProof,
	leafHash,
	treeHash,
	verifyConsistency,
	verifyInclusion
} from '../../../../scripts/verify-export.mjs';

// Merkle trees over the audit trail (issue 8/10 item 4; REQUIREMENTS AT1, RP1): RFC 9162 §2.1
// (= RFC 6962 §2.1). Test data: RFC 6962's leaves and roots as in the transparency-dev/merkle
// repository's test vectors (shared/CHECK-VALUES.md "RFC 6962 / RFC 9162 Merkle trees").
const hex = (b: Uint8Array) => Buffer.from(b).toString('hex');
const bytes = (h: string) => new Uint8Array(Buffer.from(h, 'hex'));
const data = [
	'',
	'00',
	'10',
	'2021',
	'3031',
	'40414243',
	'5051525354555657',
	'606162636465666768696a6b6c6d6e6f'
].map(bytes);
const roots = [
	'6e340b9cffb37a989ca544e6bb780a2c78901d3fb33738768511a30617afa01d',
	'fac54203e7cc696cf0dfcb42c92a1d9dbaf70ad9e621f4bd8d98662f00e3c125',
	'aeb6bcfe274b70a14fb067a5e5578264db0fa9b51af5e0ba159158f329e06e77',
	'd37ee418976dd95753c1c73862b9398fa2a2cf9b4ff0fdfe8b30cd95209614b7',
	'4e3bbb1f7b478dcfe71fb631631519a3bca12c9aefca1612bfce4c13a86264d4',
	'76e67dadbcdf1e10e1b74ddc608abd2f98dfb16fbce75277b5232a127f2087ef',
	'ddb89be403809e325750d3d263cd78929c2942b7942a34b77e122c9594a74c8c',
	'5dc9da79a70659a9ad559cb701ded9a2ab9d823aad2f4960cfe370eff4604328'
].map(bytes);
const leaves = data.map((d) => leafHash(d));
const rootOf = (n: number) => treeHash(leaves.slice(0, n));

describe('RFC 9162 Merkle tree hashes (RFC 6962 test data)', () => {
	it('the empty tree is SHA-256 of nothing (RFC 9162 §2.1.1)', () => {
		expect(hex(treeHash([]))).toBe(
			'e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'
		);
	});

	for (let n = 1; n <= 8; n++)
		it(`the root of the first ${n} leaves matches the published root`, () => {
			expect(hex(rootOf(n))).toBe(hex(roots[n - 1]!));
		});
});

describe('inclusion proofs (RFC 9162 §2.1.3)', () => {
	it('every leaf of every tree of 1 to 8 leaves proves against the published root', () => {
		let checked = 0;
		for (let n = 1; n <= 8; n++)
			for (let m = 0; m < n; m++) {
				const path = inclusionProof(leaves, m, n);
				expect(verifyInclusion(m, n, leaves[m]!, path, roots[n - 1]!), `leaf ${m} of ${n}`).toBe(
					true
				);
				checked++;
			}
		expect(checked).toBe(36);
	});

	it('fails for a changed leaf, a wrong index, an index past the size, a changed path or a wrong root', () => {
		for (let n = 2; n <= 8; n++)
			for (let m = 0; m < n; m++) {
				const path = inclusionProof(leaves, m, n);
				const root = roots[n - 1]!;
				const changed = leafHash(new Uint8Array([...data[m]!, 0xff]));
				expect(verifyInclusion(m, n, changed, path, root)).toBe(false);
				expect(verifyInclusion((m + 1) % n, n, leaves[m]!, path, root)).toBe(false);
				expect(verifyInclusion(m, m, leaves[m]!, path, root)).toBe(false); // index ≥ size
				expect(verifyInclusion(m, n, leaves[m]!, path, roots[n - 2]!)).toBe(false);
				const bent = path.map((p, i) => (i === 0 ? leafHash(p) : p));
				expect(verifyInclusion(m, n, leaves[m]!, bent, root)).toBe(false);
				expect(verifyInclusion(m, n, leaves[m]!, path.slice(1), root)).toBe(false);
			}
		expect(verifyInclusion(0, 0, leaves[0]!, [], roots[0]!)).toBe(false);
		expect(() => inclusionProof(leaves, 8, 8)).toThrow(RangeError);
	});
});

describe('consistency proofs (RFC 9162 §2.1.4)', () => {
	it('every pair of sizes 1 ≤ m ≤ n ≤ 8 proves consistent against the published roots', () => {
		let checked = 0;
		for (let n = 1; n <= 8; n++)
			for (let m = 1; m <= n; m++) {
				const proof = consistencyProof(leaves, m, n);
				expect(verifyConsistency(m, n, roots[m - 1]!, roots[n - 1]!, proof), `${m} → ${n}`).toBe(
					true
				);
				checked++;
			}
		expect(checked).toBe(36);
		expect(verifyConsistency(0, 5, treeHash([]), roots[4]!, [])).toBe(true);
	});

	it('fails when the older tree had a different leaf, for swapped roots and for a changed proof', () => {
		for (let n = 2; n <= 8; n++)
			for (let m = 1; m < n; m++) {
				const proof = consistencyProof(leaves, m, n);
				// A history rewritten: the first m leaves of the old tree were not these.
				const rewritten = leaves.slice(0, m).map((l, i) => (i === m - 1 ? leafHash(l) : l));
				const oldRoot = treeHash(rewritten);
				expect(verifyConsistency(m, n, oldRoot, roots[n - 1]!, proof), `${m} → ${n}`).toBe(false);
				expect(verifyConsistency(m, n, roots[n - 1]!, roots[m - 1]!, proof)).toBe(false);
				const bent = proof.map((p, i) => (i === proof.length - 1 ? leafHash(p) : p));
				expect(verifyConsistency(m, n, roots[m - 1]!, roots[n - 1]!, bent)).toBe(false);
				expect(verifyConsistency(m, n, roots[m - 1]!, roots[n - 1]!, [])).toBe(false);
			}
		// Equal sizes: consistent only with the same root.
		expect(verifyConsistency(4, 4, roots[3]!, roots[3]!, [])).toBe(true);
		expect(verifyConsistency(4, 4, roots[3]!, roots[4]!, [])).toBe(false);
	});
});
