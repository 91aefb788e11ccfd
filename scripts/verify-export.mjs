#!/usr/bin/env node
// Checks an exported audit trail (JSON Lines from GET /api/v1/audit/export) with nothing but
// Node's built-ins and the file itself: recomputes every hash and every link.
//
//   node scripts/verify-export.mjs FILE
//
// Exit 0: every line holds. Exit 1: the first bad line is named, with what is wrong.
// Each line is one event: its fields plus "prev_hash" and "hash" (hex). The hash is
//   SHA-256( prev_hash as 32 raw bytes ‖ UTF-8 of the RFC 8785 canonical JSON of the other fields )
// and the first event's prev_hash is 32 zero bytes; seq counts 1, 2, 3, … without gaps.
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
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

/** @param {string} file */
async function main(file) {
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
	}
	if (n === 0) {
		console.error('the file holds no events');
		process.exit(1);
	}
	console.log(`ok: ${n} events, every hash and link holds; last hash ${prev}`);
}

if (import.meta.url === `file://${process.argv[1]}`) {
	if (!process.argv[2]) {
		console.error('usage: node scripts/verify-export.mjs FILE');
		process.exit(2);
	}
	await main(process.argv[2]);
}
