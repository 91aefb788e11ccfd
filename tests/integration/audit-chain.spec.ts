import { spawn } from 'node:child_process';
import { join } from 'node:path';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { root } from '../../scripts/lib/local.js';
import { localUrl } from '../../scripts/lib/local.js';
import { recordEvent, type AuditInput } from '../../src/lib/server/audit/index';
import { verifyChain, verifyEntity } from '../../src/lib/server/audit/verify';
import { createDatabase } from '../../src/lib/server/db/index';
import { freshDatabase, type TestDatabase } from './helpers/database';

// The hash-chained audit trail against the real database (issue 3/10; REQUIREMENTS AT1, AT3, SE11).
let t: TestDatabase;
let superuser: postgres.Sql;
beforeAll(async () => {
	t = await freshDatabase();
	superuser = postgres(localUrl('superuser', t.name), { max: 1, onnotice: () => {} });
});
afterAll(async () => {
	await superuser?.end();
	await t?.drop();
});

const event = (i: number, extra: Partial<AuditInput> = {}): AuditInput => ({
	actor: { kind: 'person', id: 'p-1', name: 'Tomas Verhoek', roles: ['technician'] },
	action: 'test.append',
	entityType: 'test',
	entityId: `e-${i % 3}`,
	newValues: { i, note: 'ünïcödé ✓', nested: { b: 2, a: [1, 2.5, null] } },
	reason: i % 2 ? 'odd' : null,
	clientAddress: '203.0.113.9',
	...extra
});
const append = (input: AuditInput) => t.app.transaction((tx) => recordEvent(tx, input));

/** Changes the table as a superuser would, past the append-only trigger. */
async function tamper(statement: (sql: postgres.TransactionSql) => Promise<unknown>) {
	await superuser.begin(async (sql) => {
		await sql`set local session_replication_role = replica`;
		await statement(sql);
	});
}

describe('appending', () => {
	it('chains events from 32 zero bytes with gapless seq, and verifies', async () => {
		for (let i = 1; i <= 20; i++) await append(event(i));
		const rows =
			await t.appSql`select seq::int as seq, encode(prev_hash, 'hex') as prev, encode(hash, 'hex') as hash from audit_event order by seq`;
		expect(rows.map((r) => r.seq)).toEqual(Array.from({ length: 20 }, (_, i) => i + 1));
		expect(rows[0]!.prev).toBe('00'.repeat(32));
		for (let i = 1; i < rows.length; i++) expect(rows[i]!.prev).toBe(rows[i - 1]!.hash);
		expect(await verifyChain(t.appSql, { batchSize: 7 })).toEqual({
			ok: true,
			events: 20,
			firstBadSeq: null,
			problem: null
		});
	});

	it('keeps the time of the database clock to the millisecond, and a client clock changes nothing (DI1)', async () => {
		const before = Date.now();
		const { at } = await append(event(99));
		expect(Date.parse(at)).toBeGreaterThanOrEqual(before - 5_000);
		const [row] = await t.appSql`select at from audit_event order by seq desc limit 1`;
		expect(new Date(row!.at).toISOString()).toBe(at);
	});

	it('a rolled-back transaction leaves no event and no gap', async () => {
		const [{ n: before }] =
			(await t.appSql`select count(*)::int as n from audit_event`) as unknown as [{ n: number }];
		await expect(
			t.app.transaction(async (tx) => {
				await recordEvent(tx, event(1000));
				throw new Error('the business operation failed');
			})
		).rejects.toThrow('the business operation failed');
		const [{ n: after }] =
			(await t.appSql`select count(*)::int as n from audit_event`) as unknown as [{ n: number }];
		expect(after).toBe(before);
		await append(event(1001));
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});

	it('refuses text it cannot store exactly (NUL, a lone surrogate) and stores nothing', async () => {
		await expect(append(event(1, { reason: 'a\u0000b' }))).rejects.toThrow(/cannot store exactly/);
		await expect(append(event(1, { newValues: { x: '\ud800' } }))).rejects.toThrow(
			/cannot store exactly/
		);
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});

	it('50 concurrent writers on separate connections × 100 appends give one linear chain with no gap', async () => {
		const [{ n: start }] =
			(await t.appSql`select count(*)::int as n from audit_event`) as unknown as [{ n: number }];
		const writers = Array.from({ length: 50 }, () => createDatabase(t.appUrl, { max: 1 }));
		try {
			await Promise.all(
				writers.map(async (db, w) => {
					for (let i = 0; i < 100; i++)
						await db.transaction((tx) => recordEvent(tx, event(w * 1000 + i)));
				})
			);
		} finally {
			await Promise.all(writers.map((db) => db.client.end()));
		}
		const result = await verifyChain(t.appSql);
		expect(result).toEqual({ ok: true, events: start + 5000, firstBadSeq: null, problem: null });
		const [{ max, n }] =
			(await t.appSql`select max(seq)::int as max, count(*)::int as n from audit_event`) as unknown as [
				{ max: number; n: number }
			];
		expect(max).toBe(n);
	}, 120_000);

	it('a process killed in the middle of a transaction leaves neither a record row nor an event (SE11)', async () => {
		const [{ n: before }] =
			(await t.appSql`select count(*)::int as n from audit_event`) as unknown as [{ n: number }];
		const child = spawn(
			process.execPath,
			['--import', 'tsx', join(root, 'tests/integration/helpers/crash-writer.ts'), t.appUrl],
			{
				cwd: root,
				stdio: ['ignore', 'pipe', 'pipe']
			}
		);
		let stderr = '';
		child.stderr.on('data', (d) => (stderr += d));
		await new Promise<void>((resolve, reject) => {
			child.stdout.on('data', (d) => String(d).includes('ready') && resolve());
			child.on('exit', (code) =>
				reject(new Error(`the writer exited (${code}) before it was ready: ${stderr}`))
			);
		});
		child.removeAllListeners('exit');
		const killed = new Promise((resolve) => child.on('exit', resolve));
		child.kill('SIGKILL');
		await killed;
		// The next append waits until PostgreSQL has rolled the dead transaction back, then follows on.
		const { seq } = await append(event(2000));
		expect(seq).toBe(before + 1);
		expect(await t.appSql`select 1 from sites where code = 'CRASH'`).toHaveLength(0);
		expect(await t.appSql`select 1 from audit_event where action = 'test.crash'`).toHaveLength(0);
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	}, 60_000);
});

describe('the database refuses changes (AT1, AT4)', () => {
	it('the application role may not UPDATE or DELETE events, nor move the head elsewhere', async () => {
		await expect(
			t.appSql`update audit_event set reason = 'changed' where seq = 1`
		).rejects.toMatchObject({ code: '42501' });
		await expect(t.appSql`delete from audit_event where seq = 1`).rejects.toMatchObject({
			code: '42501'
		});
		await expect(
			t.appSql`insert into audit_chain_head (id, seq, hash) values (2, 0, '\\x00')`
		).rejects.toMatchObject({ code: '42501' });
	});

	it('the owner role’s UPDATE, DELETE and TRUNCATE are refused by the trigger', async () => {
		await expect(
			t.ownerSql`update audit_event set reason = 'changed' where seq = 1`
		).rejects.toThrow(/append-only/);
		await expect(t.ownerSql`delete from audit_event where seq = 1`).rejects.toThrow(/append-only/);
		await expect(t.ownerSql`truncate audit_event`).rejects.toThrow(/append-only/);
	});
});

describe('verification finds tampering (AT3)', () => {
	it('one column of one event changed by a superuser is reported at exactly that seq', async () => {
		await tamper((sql) => sql`update audit_event set reason = 'quietly changed' where seq = 7`);
		expect(await verifyChain(t.appSql, { batchSize: 3 })).toEqual({
			ok: false,
			events: 7,
			firstBadSeq: 7,
			problem: 'hash mismatch: the stored fields do not give the stored hash'
		});
		const entity = await t.appSql`select entity_type, entity_id from audit_event where seq = 7`;
		expect(
			await verifyEntity(t.appSql, entity[0]!.entity_type, entity[0]!.entity_id)
		).toMatchObject({ ok: false, firstBadSeq: 7 });
		// Put it back as it was (the test database goes on being used).
		await tamper((sql) => sql`update audit_event set reason = 'odd' where seq = 7`);
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});

	it('a changed value inside new_values is found too', async () => {
		await tamper(
			(sql) =>
				sql`update audit_event set new_values = jsonb_set(new_values, '{i}', '42') where seq = 3`
		);
		expect(await verifyChain(t.appSql)).toMatchObject({ ok: false, firstBadSeq: 3 });
		await tamper(
			(sql) =>
				sql`update audit_event set new_values = jsonb_set(new_values, '{i}', '3') where seq = 3`
		);
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});

	it('a deleted event shows as a gap; a deleted last event as a head ahead of the trail', async () => {
		const [saved] = await superuser`select * from audit_event where seq = 5`;
		await tamper((sql) => sql`delete from audit_event where seq = 5`);
		expect(await verifyChain(t.appSql)).toMatchObject({
			ok: false,
			firstBadSeq: 5,
			problem: 'gap in seq: expected 5, found 6'
		});
		await tamper((sql) => sql`insert into audit_event ${sql(saved!)}`);
		expect((await verifyChain(t.appSql)).ok).toBe(true);

		const [last] = await superuser`select * from audit_event order by seq desc limit 1`;
		await tamper((sql) => sql`delete from audit_event where seq = ${last!.seq}`);
		const result = await verifyChain(t.appSql);
		expect(result).toMatchObject({ ok: false, firstBadSeq: Number(last!.seq) });
		expect(result.problem).toMatch(/events at the end are missing/);
		await tamper((sql) => sql`insert into audit_event ${sql(last!)}`);
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});
