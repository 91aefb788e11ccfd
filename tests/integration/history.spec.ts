import { parse } from 'csv-parse/sync';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { localUrl } from '../../scripts/lib/local.js';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { seedDemoMasterData, seedDemoWork } from '../../src/lib/server/db/demo/index';
import * as accounts from '../../src/lib/server/accounts';
import { recordHistory } from '../../src/lib/server/history';
import { appDatabase } from './helpers/app-database';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';

// A record's History (issue 8/10 item 2, export item 5): REQUIREMENTS AT1 (old → new with the
// reason, the original stays visible), AT6 (filter by record), ES3 (a signature shows whether it
// still matches its record), MR2 (the equipment log by time with signatures), RP1 (export).
// Every expectation is read from the database the demo wrote, not restated from the seed.
let t: Awaited<ReturnType<typeof appDatabase>>;
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
const cookie: Record<string, string> = {};
let released = ''; // the demo's released work order (XV-4205, one value corrected)
let equipmentId = '';
let versionId = '';

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	await seedDemoWork(DEMO_PASSWORD);
	[{ id: released, equipment_id: equipmentId }] = (await t.ownerSql`
		select w.id, w.equipment_id from work_orders w
		join work_order_transitions t on t.work_order_id = w.id and t.kind = 'released'`) as unknown as [
		{ id: string; equipment_id: string }
	];
	[{ id: versionId }] = (await t.ownerSql`
		select v.id from procedure_versions v join procedures p on p.id = v.procedure_id
		where p.code = 'MP-DV-01' and v.version = 2`) as unknown as [{ id: string }];
	app = await serveBuiltApp(t.appUrl, 3195);
	for (const u of ['tech1', 'inspector', 'admin'])
		cookie[u] = (await signInOverHttp(app.origin, u, DEMO_PASSWORD)).cookie!;
});
afterAll(async () => {
	await app?.stop();
	await t?.drop();
});

const get = (path: string, who: string) =>
	fetch(`${app.origin}${path}`, { headers: { cookie: cookie[who]! }, redirect: 'manual' });
const seqs = (rows: ArrayLike<Record<string, unknown>>) => Array.from(rows, (r) => Number(r.seq));

describe('a record’s History', () => {
	it('a step: its entries, the correction old → new with its reason, its signatures, each still matching (AT1, ES3)', async () => {
		const stepId = `${released}:isolate`;
		const h = (await recordHistory({ kind: 'step', id: stepId }))!;
		expect(h.subject.title).toMatch(/^Step 1: /);
		const expected = await t.ownerSql`select seq from audit_event
			where (entity_id = ${released} and new_values->>'step' = 'isolate') or entity_id = ${stepId}
			order by seq`;
		expect(seqs(h.events)).toEqual(seqs(expected));
		const correction = h.events.find((e) => e.action === 'work_order.entry_correct')!;
		const [entry] = await t.ownerSql`select reason, value from step_entries
			where work_order_id = ${released} and corrects is not null`;
		expect(correction.reason).toBe(entry!.reason);
		expect(correction.newValues).toMatchObject({ value: entry!.value });
		// The value it replaced is in the event and still in the History as its own entry (AT1).
		const before = (correction.previousValues as { value: unknown }).value;
		expect(before).not.toEqual(entry!.value);
		expect(
			h.events.some(
				(e) =>
					e.action === 'work_order.entry' &&
					JSON.stringify((e.newValues as { value: unknown }).value) === JSON.stringify(before)
			)
		).toBe(true);
		const signed = h.events.filter((e) => e.signature);
		const rows = await t.ownerSql`select id, meaning from signatures
			where record_type = 'work_order_step' and record_id = ${stepId}`;
		expect(new Set(signed.map((e) => e.signature!.id))).toEqual(new Set(rows.map((r) => r.id)));
		expect(new Set(signed.map((e) => e.signature!.meaning))).toEqual(
			new Set(['performed', 'verified'])
		);
		expect(signed.every((e) => e.signature!.matches)).toBe(true);
	});

	it('a work order: its own, its steps’ and its deviations’ events, oldest first, nothing of another (AT6)', async () => {
		const h = (await recordHistory({ kind: 'work_order', id: released }))!;
		const expected = await t.ownerSql`select seq from audit_event
			where entity_id = ${released} or entity_id like ${released + ':%'}
			   or entity_id in (select id::text from deviations where work_order_id = ${released})
			order by seq`;
		expect(seqs(h.events)).toEqual(seqs(expected));
		expect(h.events.map((e) => e.action)).toEqual(
			expect.arrayContaining(['work_order.create', 'work_order.release', 'signature.sign'])
		);
		const meanings = new Set(h.events.map((e) => e.signature?.meaning).filter(Boolean));
		expect(meanings).toEqual(
			new Set(['performed', 'verified', 'executed', 'reviewed', 'released'])
		);
	});

	it('equipment: its own events and those of its work orders, by time (MR2)', async () => {
		const h = (await recordHistory({ kind: 'equipment', id: equipmentId }))!;
		const own = await t.ownerSql`select seq from audit_event where entity_id = ${equipmentId}`;
		const work = await t.ownerSql`select seq from audit_event a join work_orders w
			on a.entity_id = w.id::text where w.equipment_id = ${equipmentId}`;
		const got = new Set(seqs(h.events));
		for (const s of [...seqs(own), ...seqs(work)]) expect(got.has(s), `event ${s}`).toBe(true);
		expect(seqs(h.events)).toEqual([...seqs(h.events)].sort((a, b) => a - b));
	});

	it('a procedure version: drafted, saved, approved with a signature that matches (ES3)', async () => {
		const h = (await recordHistory({ kind: 'procedure_version', id: versionId }))!;
		expect(h.events.map((e) => e.action)).toEqual(
			expect.arrayContaining(['procedure.new_version', 'procedure.approve', 'signature.sign'])
		);
		const approval = h.events.find((e) => e.signature?.meaning === 'approved')!;
		expect(approval.signature!.matches).toBe(true);
	});

	it('an account: a role change shows the roles before and after, and the reason (AT7)', async () => {
		const [admin] = await t.ownerSql`select id, full_name from accounts where username = 'admin'`;
		const [tech2] = await t.ownerSql`select id from accounts where username = 'tech2'`;
		const by = {
			id: admin!.id,
			name: admin!.full_name,
			username: 'admin',
			email: 'admin@ostmere.example',
			roles: ['administrator' as const],
			mustChangePassword: false
		};
		await accounts.changeRoles(
			by,
			tech2!.id,
			['technician', 'planner'],
			'Covers planning in the shutdown weeks.',
			null
		);
		const h = (await recordHistory({ kind: 'account', id: tech2!.id }))!;
		const change = h.events.find((e) => e.action === 'account.roles_change')!;
		expect(change).toMatchObject({
			previousValues: { roles: ['technician'] },
			newValues: { roles: ['planner', 'technician'] },
			reason: 'Covers planning in the shutdown weeks.',
			actorName: admin!.full_name
		});
		expect(h.events[0]!.action).toBe('account.create');
	});

	it('the History pages answer over HTTP; an unknown record is 404, a bad cursor 400, an account’s History only for reviewers', async () => {
		const step = await get(`/history/step/${released}:isolate`, 'tech1');
		expect(step.status).toBe(200);
		const html = await step.text();
		expect(html).toContain('Value corrected');
		expect(html).toContain('Still matches the record');
		expect((await get(`/history/equipment/${equipmentId}`, 'inspector')).status).toBe(200);
		const missing = '00000000-0000-4000-8000-000000000000';
		expect((await get(`/history/work_order/${missing}`, 'inspector')).status).toBe(404);
		expect((await get(`/history/step/${released}:no-such-step`, 'inspector')).status).toBe(404);
		expect((await get(`/history/work_order/not-an-id`, 'inspector')).status).toBe(404);
		expect((await get(`/history/elsewhere/${released}`, 'inspector')).status).toBe(404);
		expect((await get(`/history/work_order/${released}?after=abc`, 'inspector')).status).toBe(400);
		const [tech1] = await t.ownerSql`select id from accounts where username = 'tech1'`;
		expect((await get(`/access-review/${tech1!.id}`, 'tech1')).status).toBe(403);
		expect((await get(`/access-review/${tech1!.id}`, 'inspector')).status).toBe(200);
		expect((await get(`/access-review/${missing}`, 'admin')).status).toBe(404);
	});

	it('a History exports as CSV: exactly its events, and the export is recorded with the record (RP1)', async () => {
		const record = `step:${released}:isolate`;
		const response = await get(
			`/api/v1/audit/export?format=csv&record=${encodeURIComponent(record)}`,
			'inspector'
		);
		expect(response.status).toBe(200);
		expect(response.headers.get('content-disposition')).toMatch(
			/countersign-history-step-\d{4}-\d{2}-\d{2}\.csv/
		);
		const rows = parse(await response.text(), { columns: true }) as { seq: string; hash: string }[];
		const h = (await recordHistory({ kind: 'step', id: `${released}:isolate` }))!;
		expect(rows.map((r) => Number(r.seq))).toEqual(seqs(h.events));
		expect(rows.map((r) => r.hash)).toEqual(h.events.map((e) => e.hash));
		const [recorded] = await t.ownerSql`select new_values from audit_event
			where action = 'audit.export' order by seq desc limit 1`;
		expect(recorded!.new_values).toEqual({
			format: 'csv',
			filters: { record: { kind: 'step', id: `${released}:isolate` } }
		});
		const bad = await get('/api/v1/audit/export?record=step:nonsense', 'inspector');
		expect(bad.status).toBe(400);
		expect(await bad.json()).toMatchObject({ field: 'record' });
	});

	it('after a superuser changes a signed entry in the database, the step’s signatures show that they no longer match (ES3)', async () => {
		const stepId = `${released}:isolate`;
		const superuser = postgres(localUrl('superuser', t.name), { max: 1, onnotice: () => {} });
		await superuser.begin(async (sql) => {
			await sql`set local session_replication_role = replica`;
			await sql`update step_entries set value = '{"text": "LP-0000"}'
				where work_order_id = ${released} and step_key = 'isolate' and field_key = 'loto-permit'`;
		});
		await superuser.end();
		const h = (await recordHistory({ kind: 'step', id: stepId }))!;
		const signed = h.events.filter((e) => e.signature);
		expect(signed.length).toBeGreaterThan(0);
		expect(signed.every((e) => !e.signature!.matches)).toBe(true);
		const page = await (await get(`/history/step/${stepId}`, 'inspector')).text();
		expect(page).toContain('Does not match the record today');
	});
});
