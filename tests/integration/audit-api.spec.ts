import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { localUrl, root } from '../../scripts/lib/local.js';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { freshDatabase, type TestDatabase } from './helpers/database';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';

// GET /api/v1/audit/verify, GET /api/v1/audit/export, scripts/verify-export.mjs and
// npm run audit:verify, over HTTP against the built app (issue 3/10 items 3–4; AT3, AT7, RP1).
let t: TestDatabase;
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
let inspector = '';
const dir = mkdtempSync(join(tmpdir(), 'countersign-export-'));

beforeAll(async () => {
	t = await freshDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	app = await serveBuiltApp(t.appUrl, 3192);
	inspector = (await signInOverHttp(app.origin, 'inspector', DEMO_PASSWORD)).cookie!;
});
afterAll(async () => {
	await app?.stop();
	await t?.drop();
	rmSync(dir, { recursive: true, force: true });
});

const get = (path: string, cookie: string) =>
	fetch(`${app.origin}${path}`, { headers: { cookie } });
const verifyExport = (file: string) =>
	spawnSync(process.execPath, [join(root, 'scripts/verify-export.mjs'), file], {
		encoding: 'utf8'
	});

describe('the audit API', () => {
	it('verify answers the documented shape, with numbers', async () => {
		const response = await get('/api/v1/audit/verify', inspector);
		expect(response.status).toBe(200);
		const body = await response.json();
		expect(body).toEqual({
			ok: true,
			events: expect.any(Number),
			firstBadSeq: null,
			problem: null
		});
		expect(body.events).toBeGreaterThan(6); // six accounts created, sign-ins, …
	});

	it('a technician may not verify or export (403)', async () => {
		const tech = (await signInOverHttp(app.origin, 'tech1', DEMO_PASSWORD)).cookie!;
		expect((await get('/api/v1/audit/verify', tech)).status).toBe(403);
		expect((await get('/api/v1/audit/export', tech)).status).toBe(403);
	});

	it('the export is JSON Lines an outsider can check with the script alone; it records itself', async () => {
		const response = await get('/api/v1/audit/export', inspector);
		expect(response.headers.get('content-type')).toContain('application/x-ndjson');
		const text = await response.text();
		const lines = text
			.trimEnd()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines.at(-1)).toMatchObject({ action: 'audit.export', actor_name: 'Iris Moravec' });
		expect(Object.keys(lines[0]!).sort()).toEqual(
			[
				'action',
				'actor_id',
				'actor_kind',
				'actor_name',
				'actor_roles',
				'at',
				'client_address',
				'entity_id',
				'entity_type',
				'hash',
				'new_values',
				'prev_hash',
				'previous_values',
				'reason',
				'seq'
			].sort()
		);
		expect(typeof lines[0]!.seq).toBe('number');
		expect(lines[0]!.at).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/);

		const file = join(dir, 'trail.jsonl');
		writeFileSync(file, text);
		const good = verifyExport(file);
		expect(good.status, good.stderr).toBe(0);
		expect(good.stdout).toMatch(new RegExp(`^ok: ${lines.length} events`));

		// One changed byte in the third line's actor name is named, with its line.
		const third = text.split('\n')[2]!;
		const changed = third.replace(
			/"actor_name":"(.)/,
			(_m, c: string) => `"actor_name":"${c === 'X' ? 'Y' : 'X'}`
		);
		expect(changed).not.toBe(third);
		writeFileSync(file, text.replace(third, changed));
		const bad = verifyExport(file);
		expect(bad.status).toBe(1);
		expect(bad.stderr).toMatch(/^line 3: hash mismatch/);

		// A line taken out shows as a gap.
		writeFileSync(
			file,
			text
				.split('\n')
				.filter((_, i) => i !== 1)
				.join('\n')
		);
		expect(verifyExport(file).stderr).toMatch(/^line 2: seq is 3, expected 2/);
	});

	it('a filtered view exports as CSV and as JSON Lines, and the export records its filters (8/10 item 5; AT7)', async () => {
		const response = await get(
			'/api/v1/audit/export?format=csv&entityType=account&action=account.create',
			inspector
		);
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toContain('text/csv');
		expect(response.headers.get('content-disposition')).toMatch(/countersign-audit-view-.*\.csv/);
		const text = await response.text();
		const [header, ...rows] = text.trimEnd().split('\n');
		expect(header).toBe(
			'seq,at,actor_kind,actor_id,actor_name,actor_roles,action,entity_type,entity_id,reason,new_values,previous_values,client_address,prev_hash,hash'
		);
		const expected = (await t.ownerSql`select seq::int as seq, encode(hash, 'hex') as hash
			from audit_event where entity_type = 'account' and action = 'account.create' order by seq`) as unknown as {
			seq: number;
			hash: string;
		}[];
		expect(expected.length).toBe(6); // the six demo accounts
		expect(rows.map((r) => Number(r.split(',')[0]))).toEqual(expected.map((e) => e.seq));
		expect(rows.map((r) => r.split(',').at(-1))).toEqual(expected.map((e) => e.hash));
		const [recorded] = await t.ownerSql`select new_values from audit_event
			where action = 'audit.export' order by seq desc limit 1`;
		expect(recorded!.new_values).toEqual({
			format: 'csv',
			filters: { entityType: 'account', action: 'account.create' }
		});

		const jsonl = await (await get('/api/v1/audit/export?entityType=account', inspector)).text();
		const lines = jsonl
			.trimEnd()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines.length).toBeGreaterThanOrEqual(6);
		expect(lines.every((l) => l.entity_type === 'account')).toBe(true);
		expect(lines.map((l) => l.seq)).toEqual([...lines.map((l) => l.seq)].sort((a, b) => a - b));
	});

	it('a CSV cell that a spreadsheet would run as a formula is led by an apostrophe', async () => {
		const { csvCell } = await import('../../src/lib/server/audit/browse');
		expect(csvCell('=HYPERLINK("x")')).toBe(`'=HYPERLINK("x")`);
		expect(csvCell('+1')).toBe("'+1");
		expect(csvCell('-2')).toBe("'-2");
		expect(csvCell('@SUM(A1)')).toBe("'@SUM(A1)");
		expect(csvCell(['technician', 'quality'])).toBe('technician;quality');
		expect(csvCell({ a: 1 })).toBe('{"a":1}');
		expect(csvCell(null)).toBe('');
		expect(csvCell(42)).toBe('42');
	});

	it('an export with a wrong format or filter is refused with a message (400), and nothing is recorded', async () => {
		const before =
			await t.ownerSql`select count(*)::int as n from audit_event where action = 'audit.export'`;
		const bad = await get('/api/v1/audit/export?format=xlsx', inspector);
		expect(bad.status).toBe(400);
		expect(await bad.json()).toEqual({ message: 'format is jsonl or csv.', field: 'format' });
		const unknown = await get('/api/v1/audit/export?colour=red', inspector);
		expect(unknown.status).toBe(400);
		expect((await unknown.json()).message).toMatch(/^Unknown filter colour/);
		const wrongDate = await get('/api/v1/audit/export?from=yesterday', inspector);
		expect(wrongDate.status).toBe(400);
		const after =
			await t.ownerSql`select count(*)::int as n from audit_event where action = 'audit.export'`;
		expect(after[0]!.n).toBe(before[0]!.n);
	});

	it('a failed verification names the first bad event and is itself audited', async () => {
		const superuser = postgres(localUrl('superuser', t.name), { max: 1, onnotice: () => {} });
		await superuser.begin(async (sql) => {
			await sql`set local session_replication_role = replica`;
			await sql`update audit_event set actor_name = 'Someone Else' where seq = 4`;
		});
		await superuser.end();
		const body = await (await get('/api/v1/audit/verify', inspector)).json();
		expect(body).toEqual({
			ok: false,
			events: 4,
			firstBadSeq: 4,
			problem: 'hash mismatch: the stored fields do not give the stored hash'
		});
		const [failed] =
			await t.ownerSql`select actor_name, new_values from audit_event where action = 'audit.verify_failed'`;
		expect(failed).toMatchObject({ actor_name: 'Iris Moravec', new_values: { firstBadSeq: 4 } });
		// Quality and the Administrators are told by e-mail, written with the failure's own event (8/10).
		const mails = await t.ownerSql`select payload->>'to' as "to", payload->>'subject' as subject
			from outbox where kind = 'mail' and payload->>'subject' like 'The audit trail failed%' order by 1`;
		expect(mails).toEqual([
			{
				to: 'admin@ostmere.example',
				subject: 'The audit trail failed its verification at event 4'
			},
			{
				to: 'quality@ostmere.example',
				subject: 'The audit trail failed its verification at event 4'
			}
		]);

		// The streaming verification reports its progress, then the same answer.
		const stream = await get('/api/v1/audit/verify/stream', inspector);
		expect(stream.headers.get('content-type')).toContain('application/x-ndjson');
		const lines = (await stream.text())
			.trimEnd()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines.at(-1)).toEqual({ done: true, ...body });
		for (const l of lines.slice(0, -1))
			expect(l).toEqual({ checked: expect.any(Number), total: expect.any(Number) });

		// npm run audit:verify says the same from the command line, and exits 1.
		const cli = spawnSync(process.execPath, [join(root, 'scripts/audit-verify.js')], {
			encoding: 'utf8',
			env: { ...process.env, DATABASE_URL: t.appUrl }
		});
		expect(cli.status).toBe(1);
		expect(JSON.parse(cli.stdout)).toMatchObject({ ok: false, firstBadSeq: 4 });
	});
});
