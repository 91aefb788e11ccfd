#!/usr/bin/env node
// Checks an exported audit trail (JSON Lines from GET /api/v1/audit/export) with nothing but
// Node's built-ins and the file itself: recomputes every hash and every link.
//
//   node scripts/verify-export.mjs FILE
//   node scripts/verify-export.mjs --inclusion PROOF.json [EXPORT]   an event is in a checkpoint
//   node scripts/verify-export.mjs --consistency PROOF.json [EXPORT] a later checkpoint extends an earlier
//
// The proofs are the JSON of GET /api/v1/audit/proof (RFC 9162 Merkle trees over the event hashes,
// below); with EXPORT the checkpoints' roots are also recomputed from the exported events.
// Exit 0: every line (or the proof) holds. Exit 1: the first bad line is named, with what is wrong.
// Each line is one event: its fields plus "prev_hash" and "hash" (hex). The hash is
//   SHA-256( prev_hash as 32 raw bytes ‖ UTF-8 of the RFC 8785 canonical JSON of the other fields )
// and the first event's prev_hash is 32 zero bytes; seq counts 1, 2, 3, … without gaps.
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createInterface } from 'node:readline';

/**
 * RFC 8785: object keys sorted by UTF-16 code units; numbers and strings as ECMAScript's JSON.stringify writes them.
 * @param {unknown} value
 * @returns {string}
 */
export function canonical(value) {
	if (typeof value === 'number' && !Number.isFinite(value))
		throw new Error('a number that is not finite');
	if (typeof value === 'string' && !value.isWellFormed())
		throw new Error('a lone surrogate in a string');
	if (value === null || typeof value !== 'object') return JSON.stringify(value);
	if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
	const keys = Object.keys(value).sort(); // default sort: by UTF-16 code units
	const object = /** @type {Record<string, unknown>} */ (value);
	return `{${keys.map((k) => `${canonical(k)}:${canonical(object[k])}`).join(',')}}`;
}

// ── Merkle trees over the event hashes (RFC 9162 §2.1, the same as RFC 6962 §2.1) ─────────────
// A leaf is SHA-256(0x00 ‖ data), a node SHA-256(0x01 ‖ left ‖ right), the empty tree SHA-256("").
// For the audit trail the data of leaf i is the 32 raw bytes of event i+1's hash.

/** @param {...Uint8Array} parts */
const sha256 = (...parts) => {
	const h = createHash('sha256');
	for (const p of parts) h.update(p);
	return new Uint8Array(h.digest());
};
const LEAF = Uint8Array.of(0);
const NODE = Uint8Array.of(1);

/** @param {Uint8Array} data */
export const leafHash = (data) => sha256(LEAF, data);
/** @param {Uint8Array} left @param {Uint8Array} right */
export const nodeHash = (left, right) => sha256(NODE, left, right);

/** The largest power of two smaller than n (n > 1). @param {number} n */
function split(n) {
	let k = 1;
	while (k * 2 < n) k *= 2;
	return k;
}

/**
 * MTH(D[lo:hi]) over leaf hashes.
 * @param {readonly Uint8Array[]} leaves leaf hashes
 * @returns {Uint8Array}
 */
export function treeHash(leaves, lo = 0, hi = leaves.length) {
	const n = hi - lo;
	if (n === 0) return sha256();
	if (n === 1) return /** @type {Uint8Array} */ (leaves[lo]);
	const k = split(n);
	return nodeHash(treeHash(leaves, lo, lo + k), treeHash(leaves, lo + k, hi));
}

/**
 * PATH(m, D[n]): the inclusion proof of leaf m in the tree of the first n leaves.
 * @param {readonly Uint8Array[]} leaves @param {number} m @param {number} n
 * @returns {Uint8Array[]}
 */
export function inclusionProof(leaves, m, n = leaves.length, lo = 0) {
	if (m < 0 || m >= n || lo + n > leaves.length)
		throw new RangeError('leaf index outside the tree');
	if (n === 1) return [];
	const k = split(n);
	return m < k
		? [...inclusionProof(leaves, m, k, lo), treeHash(leaves, lo + k, lo + n)]
		: [...inclusionProof(leaves, m - k, n - k, lo + k), treeHash(leaves, lo, lo + k)];
}

/**
 * PROOF(m, D[n]): the consistency proof between the trees of the first m and the first n leaves.
 * @param {readonly Uint8Array[]} leaves @param {number} m @param {number} n
 * @returns {Uint8Array[]}
 */
export function consistencyProof(leaves, m, n = leaves.length) {
	if (m < 0 || m > n || n > leaves.length) throw new RangeError('tree sizes outside the log');
	if (m === 0 || m === n) return [];
	/** @param {number} m @param {number} lo @param {number} n @param {boolean} whole @returns {Uint8Array[]} */
	const sub = (m, lo, n, whole) => {
		if (m === n) return whole ? [] : [treeHash(leaves, lo, lo + n)];
		const k = split(n);
		return m <= k
			? [...sub(m, lo, k, whole), treeHash(leaves, lo + k, lo + n)]
			: [...sub(m - k, lo + k, n - k, false), treeHash(leaves, lo, lo + k)];
	};
	return sub(m, 0, n, true);
}

/** @param {Uint8Array} a @param {Uint8Array} b */
const same = (a, b) => a.length === b.length && a.every((x, i) => x === b[i]);

/**
 * Verifies an inclusion proof (RFC 9162 §2.1.3.2).
 * @param {number} index @param {number} size @param {Uint8Array} leaf the leaf hash
 * @param {readonly Uint8Array[]} path @param {Uint8Array} root
 */
export function verifyInclusion(index, size, leaf, path, root) {
	if (!(index >= 0 && index < size)) return false;
	let fn = index;
	let sn = size - 1;
	let r = leaf;
	for (const p of path) {
		if (sn === 0) return false;
		if (fn % 2 === 1 || fn === sn) {
			r = nodeHash(p, r);
			if (fn % 2 === 0) while (fn % 2 === 0 && fn !== 0) [fn, sn] = [fn >>> 1, sn >>> 1];
		} else r = nodeHash(r, p);
		[fn, sn] = [fn >>> 1, sn >>> 1];
	}
	return sn === 0 && same(r, root);
}

/**
 * Verifies a consistency proof between a tree of `first` leaves and one of `second` (RFC 9162
 * §2.1.4.2). Equal sizes are consistent when the roots are equal; an empty first tree always is.
 * @param {number} first @param {number} second @param {Uint8Array} firstRoot @param {Uint8Array} secondRoot
 * @param {readonly Uint8Array[]} proof
 */
export function verifyConsistency(first, second, firstRoot, secondRoot, proof) {
	if (!(first >= 0 && first <= second)) return false;
	if (first === second) return proof.length === 0 && same(firstRoot, secondRoot);
	if (first === 0) return proof.length === 0;
	if (proof.length === 0) return false;
	const path = (first & (first - 1)) === 0 ? [firstRoot, ...proof] : [...proof];
	let fn = first - 1;
	let sn = second - 1;
	while (fn % 2 === 1) [fn, sn] = [fn >>> 1, sn >>> 1];
	let fr = /** @type {Uint8Array} */ (path[0]);
	let sr = fr;
	for (const c of path.slice(1)) {
		if (sn === 0) return false;
		if (fn % 2 === 1 || fn === sn) {
			fr = nodeHash(c, fr);
			sr = nodeHash(c, sr);
			if (fn % 2 === 0) while (fn % 2 === 0 && fn !== 0) [fn, sn] = [fn >>> 1, sn >>> 1];
		} else sr = nodeHash(sr, c);
		[fn, sn] = [fn >>> 1, sn >>> 1];
	}
	return sn === 0 && same(fr, firstRoot) && same(sr, secondRoot);
}

/**
 * Checks an export line by line; exits 1 at the first bad line. Returns the events' hashes.
 * @param {string} file
 */
async function checkExport(file) {
	/** @type {string[]} */
	const hashes = [];
	const lines = createInterface({ input: createReadStream(file, 'utf8'), crlfDelay: Infinity });
	let n = 0;
	let prev = '00'.repeat(32);
	for await (const line of lines) {
		n++;
		/** @param {string} why @returns {never} */
		const bad = (why) => {
			console.error(`line ${n}: ${why}`);
			process.exit(1);
		};
		/** @type {Record<string, any>} */
		let event = {};
		try {
			event = JSON.parse(line);
		} catch {
			bad('not JSON');
		}
		const { prev_hash: prevHash, hash, ...fields } = event;
		if (fields.seq !== n)
			bad(`seq is ${fields.seq}, expected ${n} (an event is missing or out of order)`);
		if (prevHash !== prev) bad('prev_hash is not the hash of the line before');
		let text = '';
		try {
			text = canonical(fields);
		} catch (e) {
			bad(`cannot be canonicalised: ${/** @type {Error} */ (e).message}`);
		}
		const computed = createHash('sha256')
			.update(Buffer.from(prevHash, 'hex'))
			.update(text, 'utf8')
			.digest('hex');
		if (computed !== hash)
			bad(`hash mismatch (seq ${fields.seq}): the fields do not give the stated hash`);
		prev = hash;
		hashes.push(hash);
	}
	if (n === 0) {
		console.error('the file holds no events');
		process.exit(1);
	}
	return hashes;
}

/** @param {string} file */
async function main(file) {
	const hashes = await checkExport(file);
	console.log(`ok: ${hashes.length} events, every hash and link holds; last hash ${hashes.at(-1)}`);
}

const isHash = (/** @type {unknown} */ h) => typeof h === 'string' && /^[0-9a-f]{64}$/.test(h);
const fromHex = (/** @type {string} */ h) => new Uint8Array(Buffer.from(h, 'hex'));

/**
 * The root of the first `size` events of a checked export, or exit 1 if the export is shorter.
 * @param {string[]} hashes @param {number} size
 */
function rootFromExport(hashes, size) {
	if (hashes.length < size) {
		console.error(`the export holds ${hashes.length} events, fewer than the checkpoint's ${size}`);
		process.exit(1);
	}
	return Buffer.from(treeHash(hashes.slice(0, size).map((h) => leafHash(fromHex(h))))).toString(
		'hex'
	);
}

/**
 * Checks an inclusion or consistency proof file, and against an export when one is given.
 * @param {'inclusion' | 'consistency'} kind @param {string} file @param {string | undefined} exportFile
 */
async function proof(kind, file, exportFile) {
	/** @param {string} why @returns {never} */
	const bad = (why) => {
		console.error(`${kind} proof: ${why}`);
		process.exit(1);
	};
	/** @type {any} */
	let p;
	try {
		p = JSON.parse(await readFile(file, 'utf8'));
	} catch {
		bad('the file is not JSON');
	}
	if (p?.kind !== kind) bad(`the file is not a ${kind} proof (kind is ${JSON.stringify(p?.kind)})`);
	if (!Array.isArray(p.path) || !p.path.every(isHash))
		bad('path must be a list of hex SHA-256 hashes');
	const path = p.path.map(fromHex);
	const hashes = exportFile ? await checkExport(exportFile) : null;
	if (kind === 'inclusion') {
		const { seq, eventHash, treeSize, rootHash } = p;
		if (
			!Number.isSafeInteger(seq) ||
			!Number.isSafeInteger(treeSize) ||
			!isHash(eventHash) ||
			!isHash(rootHash)
		)
			bad('seq, treeSize, eventHash and rootHash are needed');
		if (hashes && hashes[seq - 1] !== eventHash) bad(`event ${seq} in the export has another hash`);
		if (hashes && rootFromExport(hashes, treeSize) !== rootHash)
			bad(`the export's first ${treeSize} events give another root than the checkpoint`);
		if (!verifyInclusion(seq - 1, treeSize, leafHash(fromHex(eventHash)), path, fromHex(rootHash)))
			bad(`event ${seq} is not proven in the checkpoint of ${treeSize} events`);
		console.log(
			`ok: event ${seq} (${eventHash}) is in the checkpoint of ${treeSize} events, root ${rootHash}`
		);
		return;
	}
	const { first, second } = p;
	for (const c of [first, second])
		if (!Number.isSafeInteger(c?.treeSize) || !isHash(c?.rootHash))
			bad('first and second need treeSize and rootHash');
	if (hashes)
		for (const c of [first, second])
			if (rootFromExport(hashes, c.treeSize) !== c.rootHash)
				bad(`the export's first ${c.treeSize} events give another root than the checkpoint`);
	if (
		!verifyConsistency(
			first.treeSize,
			second.treeSize,
			fromHex(first.rootHash),
			fromHex(second.rootHash),
			path
		)
	)
		bad(`the checkpoint of ${second.treeSize} events does not extend the one of ${first.treeSize}`);
	console.log(
		`ok: the checkpoint of ${second.treeSize} events extends the one of ${first.treeSize}`
	);
}

if (import.meta.url === `file://${process.argv[1]}`) {
	const [first, second, third] = process.argv.slice(2);
	if (first === '--inclusion' || first === '--consistency') {
		if (!second) {
			console.error(`usage: node scripts/verify-export.mjs ${first} PROOF.json [EXPORT]`);
			process.exit(2);
		}
		await proof(first === '--inclusion' ? 'inclusion' : 'consistency', second, third);
	} else {
		if (!first) {
			console.error(
				'usage: node scripts/verify-export.mjs FILE | --inclusion PROOF.json [EXPORT] | --consistency PROOF.json [EXPORT]'
			);
			process.exit(2);
		}
		await main(first);
	}
}
