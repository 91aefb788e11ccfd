import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { localUrl, root } from '../../scripts/lib/local.js';
import {
	leafHash,
	treeHash,
	verifyConsistency,
	verifyInclusion
} from '../../scripts/verify-export.mjs';
import {
	checkpointNow,
	consistencyOf,
	ensureIntervalCheckpoints,
	inclusionOf,
	listCheckpoints
} from '../../src/lib/server/audit/checkpoints';
import { exportLines } from '../../src/lib/server/audit/export';
import { recordEventNow } from '../../src/lib/server/audit/now';
import { db } from '../../src/lib/server/db/index';
import { appDatabase } from './helpers/app-database';

// Checkpoints of the audit trail and the proofs an outsider checks (issue 8/10 item 4;
// REQUIREMENTS AT1, AT3, RP1): RFC 9162 Merkle tree heads at every 1,000 events and on demand
// (a release), inclusion and consistency proofs served as JSON, and scripts/verify-export.mjs
// checking them with Node built-ins only — alone and against an export. The tree code itself is
// checked against the RFC 6962 test data in src/lib/server/audit/merkle.spec.ts.
let t: Awaited<ReturnType<typeof appDatabase>>;
const dir = mkdtempSync(join(tmpdir(), 'countersign-proofs-'));
const EVENTS = 2345;

beforeAll(async () => {
	t = await appDatabase();
	for (let i = 1; i <= EVENTS; i++)
		await recordEventNow({
			actor: { kind: 'system', name: 'system: test' },
			action: 'test.append',
			entityType: 'test',
			entityId: `e-${i % 7}`,
			newValues: { i }
		});
}, 120_000);
afterAll(async () => {
	await t?.drop();
	rmSync(dir, { recursive: true, force: true });
});

const hashes = async (upTo: number) =>
	(
		await t.ownerSql`select encode(hash, 'hex') as h from audit_event where seq <= ${upTo} order by seq`
	).map((r) => r.h as string);
const rootOf = (hex: string[]) =>
	Buffer.from(treeHash(hex.map((h) => leafHash(new Uint8Array(Buffer.from(h, 'hex')))))).toString(
		'hex'
	);
const script = (...args: string[]) =>
	spawnSync(process.execPath, [join(root, 'scripts/verify-export.mjs'), ...args], {
		encoding: 'utf8'
	});
const fromHex = (h: string) => new Uint8Array(Buffer.from(h, 'hex'));

describe('checkpoints', () => {
	it('are kept at every 1,000 events, once (a second run, or a second server, adds none)', async () => {
		const made = await ensureIntervalCheckpoints();
		expect(made.map((c) => c.treeSize)).toEqual([1000, 2000]);
		expect(await ensureIntervalCheckpoints()).toEqual([]);
		for (const c of made) expect(c.rootHash).toBe(rootOf(await hashes(c.treeSize)));
	});

	it('one is made of the whole trail on demand (a release names it)', async () => {
		const c = await checkpointNow('release');
		expect(c.treeSize).toBe(EVENTS);
		expect(c.reason).toBe('release');
		expect(c.rootHash).toBe(rootOf(await hashes(EVENTS)));
		expect((await listCheckpoints()).map((x) => x.treeSize)).toEqual([EVENTS, 2000, 1000]);
	});

	it('are append-only like the trail', async () => {
		await expect(t.appSql`update audit_checkpoints set reason = 'interval'`).rejects.toThrow();
		await expect(t.ownerSql`delete from audit_checkpoints`).rejects.toThrow(/append-only/);
	});
});

describe('inclusion proofs', () => {
	it('prove every event of a checkpoint in it (sampled), and no other event hash', async () => {
		const all = await hashes(2000);
		for (const seq of [1, 2, 999, 1000, 1001, 1234, 1999, 2000]) {
			const p = (await inclusionOf(seq, 2000))!;
			expect(p).toMatchObject({ kind: 'inclusion', seq, treeSize: 2000, eventHash: all[seq - 1] });
			expect(p.path.length).toBeLessThanOrEqual(11); // at most ⌈log2 2000⌉ hashes (fewer on the right edge)
			const ok = (h: string) =>
				verifyInclusion(
					seq - 1,
					2000,
					leafHash(fromHex(h)),
					p.path.map(fromHex),
					fromHex(p.rootHash)
				);
			expect(ok(p.eventHash), `seq ${seq}`).toBe(true);
			expect(ok(all[seq % 2000]!)).toBe(false);
		}
		expect(await inclusionOf(2001, 2000)).toBeNull();
		expect(await inclusionOf(5, 1500)).toBeNull(); // no checkpoint of 1,500 events
	});

	it('scripts/verify-export.mjs --inclusion checks one alone and against an export; a changed byte fails', async () => {
		const proof = (await inclusionOf(1234, 2000))!;
		const file = join(dir, 'inclusion.json');
		writeFileSync(file, JSON.stringify(proof));
		const good = script('--inclusion', file);
		expect(good.stderr).toBe('');
		expect(good.status).toBe(0);
		expect(good.stdout).toContain('ok: event 1234');

		const lines: string[] = [];
		for await (const line of exportLines(db().client, EVENTS)) lines.push(line);
		const trail = join(dir, 'trail.jsonl');
		writeFileSync(trail, lines.join(''));
		expect(script('--inclusion', file, trail).status).toBe(0);

		const bent = { ...proof, path: proof.path.map((h, i) => (i === 3 ? `0${h.slice(1)}` : h)) };
		writeFileSync(join(dir, 'bent.json'), JSON.stringify(bent));
		const bad = script('--inclusion', join(dir, 'bent.json'));
		expect(bad.status).toBe(1);
		expect(bad.stderr).toMatch(/event 1234 is not proven in the checkpoint of 2000 events/);
		// One changed byte in the export (an event's reason): the export check names the line.
		const text = readFileSync(trail, 'utf8').replace('"i":500}', '"i":501}');
		writeFileSync(join(dir, 'changed.jsonl'), text);
		const changed = script('--inclusion', file, join(dir, 'changed.jsonl'));
		expect(changed.status).toBe(1);
		expect(changed.stderr).toMatch(/^line 500: hash mismatch/);
		writeFileSync(join(dir, 'not-a-proof.json'), '{"kind":"consistency"}');
		expect(script('--inclusion', join(dir, 'not-a-proof.json')).stderr).toMatch(
			/not a inclusion proof|is not a inclusion/
		);
	});
});

describe('consistency proofs', () => {
	it('prove that a later checkpoint extends an earlier one', async () => {
		const p = (await consistencyOf(1000, EVENTS))!;
		expect(p.first.treeSize).toBe(1000);
		expect(
			verifyConsistency(
				1000,
				EVENTS,
				fromHex(p.first.rootHash),
				fromHex(p.second.rootHash),
				p.path.map(fromHex)
			)
		).toBe(true);
		const file = join(dir, 'consistency.json');
		writeFileSync(file, JSON.stringify(p));
		const run = script('--consistency', file, join(dir, 'trail.jsonl'));
		expect(run.stderr).toBe('');
		expect(run.stdout).toContain(`ok: the checkpoint of ${EVENTS} events extends the one of 1000`);
		expect(await consistencyOf(2000, 1000)).toBeNull();
	});

	it('a history rewritten below a checkpoint is caught: the old root no longer follows', async () => {
		const p = (await consistencyOf(1000, 2000))!;
		// An outsider kept the 1,000-event root; the server now claims another for it.
		const forged = {
			...p,
			first: { ...p.first, rootHash: rootOf((await hashes(999)).concat('00'.repeat(32))) }
		};
		writeFileSync(join(dir, 'forged.json'), JSON.stringify(forged));
		const run = script('--consistency', join(dir, 'forged.json'));
		expect(run.status).toBe(1);
		expect(run.stderr).toMatch(/does not extend the one of 1000/);
		// In the database: an event's hash changed by a superuser after the checkpoint. The proof the
		// server now gives for it no longer reaches the checkpoint's root.
		const superuser = postgres(localUrl('superuser', t.name), { max: 1, onnotice: () => {} });
		await superuser.begin(async (sql) => {
			await sql`set local session_replication_role = replica`;
			await sql`update audit_event set hash = sha256(hash) where seq = 42`;
		});
		await superuser.end();
		const moved = (await inclusionOf(42, 1000))!;
		expect(moved.rootHash).toBe(p.first.rootHash);
		expect(
			verifyInclusion(
				41,
				1000,
				leafHash(fromHex(moved.eventHash)),
				moved.path.map(fromHex),
				fromHex(moved.rootHash)
			)
		).toBe(false);
		// And a checkpoint of the tampered trail at a kept size is refused.
		await expect(ensureIntervalCheckpoints()).resolves.toEqual([]);
	});
});
