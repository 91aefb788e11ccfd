import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as accounts from '../../src/lib/server/accounts';
import { accessReview, parseApiQuery, parsePeriodQuery } from '../../src/lib/server/access-review';
import type { User } from '../../src/lib/server/auth/guard';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { appDatabase } from './helpers/app-database';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';

// The access review (issue 8/10 item 6): the recertification report and its export, against the
// real database and over HTTP against the built app. REQUIREMENTS: AC5 (a recertification report
// lists users, roles, last sign-in), AC3 (the access list exports users and roles), AT7 (role
// grants and revocations are events; exports are recorded). Every expected value below is read
// from the database (accounts, audit_event), never written into the test.
let t: Awaited<ReturnType<typeof appDatabase>>;
let admin: User;
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
let inspector = '';
const ip = '198.51.100.9'; // RFC 5737 documentation range
/** A timestamp from the owner's connection (Drizzle over it reads them as text) as ISO 8601. */
const iso = (v: unknown) => (v == null ? null : new Date(v as string | Date).toISOString());
const today = () => new Date().toISOString().slice(0, 10);
const period = () => ({ from: '2020-01-01', to: today() });

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	const [row] =
		await t.ownerSql`select id, username, full_name, email, roles from accounts where username = 'admin'`;
	admin = {
		id: row!.id,
		username: 'admin',
		name: row!.full_name,
		email: row!.email,
		roles: row!.roles,
		mustChangePassword: false
	};
	app = await serveBuiltApp(t.appUrl, 3194);
	inspector = (await signInOverHttp(app.origin, 'inspector', DEMO_PASSWORD)).cookie!;
}, 60_000);
afterAll(async () => {
	await app?.stop();
	await t?.drop();
});

type Event = {
	seq: number;
	at: string;
	action: string;
	actor_name: string;
	reason: string | null;
	new_values: unknown;
};
const eventsOf = async (id: string) =>
	(await t.ownerSql`select seq::int as seq, at, action, actor_name, reason, new_values
		from audit_event where entity_id = ${id} order by seq`) as unknown as Event[];
const exportCount = async () =>
	(
		await t.ownerSql`select count(*)::int as n from audit_event where action = 'access_review.export'`
	)[0]!.n as number;
const get = (path: string, cookie = inspector) =>
	fetch(`${app.origin}${path}`, { headers: { cookie } });

/** RFC 4180 as csv-stringify writes it: quoted cells may hold commas, quotes and line breaks. */
function parseCsv(text: string): string[][] {
	const rows: string[][] = [];
	let row: string[] = [];
	let cell = '';
	let quoted = false;
	for (let i = 0; i < text.length; i++) {
		const c = text[i]!;
		if (quoted) {
			if (c === '"' && text[i + 1] === '"') {
				cell += '"';
				i++;
			} else if (c === '"') quoted = false;
			else cell += c;
		} else if (c === '"') quoted = true;
		else if (c === ',') {
			row.push(cell);
			cell = '';
		} else if (c === '\n') {
			row.push(cell);
			rows.push(row);
			row = [];
			cell = '';
		} else if (c !== '\r') cell += c;
	}
	if (cell || row.length) rows.push([...row, cell]);
	return rows;
}

async function newAccount(username: string, fullName = 'Odile Farrant') {
	return accounts.createAccount(
		admin,
		{ username, fullName, email: `${username}@ostmere.example`, roles: ['technician'] },
		ip
	);
}

describe('who holds which roles since when (AC5, AT7)', () => {
	it('AC5 AT7: a role granted by an administrator holds "since" that event, and shows as added in the period', async () => {
		const { id } = await newAccount('rev-granted');
		await accounts.changeRoles(admin, id, ['planner', 'technician'], 'plans the night shift', ip);
		const events = await eventsOf(id);
		const created = events.find((e) => e.action === 'account.create')!;
		const change = events.find((e) => e.action === 'account.roles_change')!;

		const report = await accessReview(period());
		const account = report.accounts.find((a) => a.id === id)!;
		expect(account.roles).toEqual([
			{
				role: 'planner',
				since: iso(change.at),
				sinceSeq: change.seq,
				grantedBy: change.actor_name,
				reason: change.reason
			},
			{
				// Kept through the change: still since the account was created.
				role: 'technician',
				since: iso(created.at),
				sinceSeq: created.seq,
				grantedBy: created.actor_name,
				reason: created.reason
			}
		]);
		const [row] = await t.ownerSql`select roles from accounts where id = ${id}`;
		expect(account.roles.map((r) => r.role)).toEqual([...row!.roles].sort());
		expect(account.unexplained).toBe(false);

		const changes = report.changes.filter((c) => c.accountId === id);
		expect(changes.map((c) => [c.seq, c.kind, c.added, c.removed, c.by])).toEqual([
			[created.seq, 'created', ['technician'], [], created.actor_name],
			[change.seq, 'roles_changed', ['planner'], [], change.actor_name]
		]);
		expect(changes[1]!.reason).toBe(change.reason);
		expect(changes[1]!.at).toBe(iso(change.at));
	});

	it('AC5 AT7: a removed role is gone from the account and shows as removed; a role granted again has a new "since"', async () => {
		const { id } = await newAccount('rev-removed');
		await accounts.changeRoles(admin, id, ['planner', 'technician'], 'covers planning', ip);
		await accounts.changeRoles(admin, id, ['planner'], 'no longer on the floor', ip);
		await accounts.changeRoles(admin, id, ['planner', 'technician'], 'back on the floor', ip);
		const changes = (await eventsOf(id)).filter((e) => e.action === 'account.roles_change');
		expect(changes).toHaveLength(3);

		const report = await accessReview(period());
		const account = report.accounts.find((a) => a.id === id)!;
		const since = Object.fromEntries(account.roles.map((r) => [r.role, r.since]));
		expect(since).toEqual({
			planner: iso(changes[0]!.at),
			technician: iso(changes[2]!.at)
		});
		const mine = report.changes.filter((c) => c.accountId === id && c.kind === 'roles_changed');
		expect(mine.map((c) => [c.seq, c.added, c.removed, c.reason])).toEqual([
			[changes[0]!.seq, ['planner'], [], changes[0]!.reason],
			[changes[1]!.seq, [], ['technician'], changes[1]!.reason],
			[changes[2]!.seq, ['technician'], [], changes[2]!.reason]
		]);
	});

	it('AC5: a deactivated account is listed as deactivated, with its date, who and why', async () => {
		const { id } = await newAccount('rev-leaver');
		await accounts.deactivateAccount(admin, id, 'left the site', ip);
		const [row] = await t.ownerSql`select active, deactivated_at from accounts where id = ${id}`;
		const event = (await eventsOf(id)).find((e) => e.action === 'account.deactivate')!;
		const report = await accessReview(period());
		const account = report.accounts.find((a) => a.id === id)!;
		expect(row!.active).toBe(false);
		expect(account).toMatchObject({
			active: row!.active,
			status: 'deactivated',
			deactivatedAt: iso(row!.deactivated_at),
			deactivatedBy: event.actor_name,
			deactivationReason: event.reason
		});
		expect(account.flags).toContain('deactivated');
		expect(report.changes.find((c) => c.seq === event.seq)).toMatchObject({
			kind: 'deactivated',
			accountId: id,
			by: event.actor_name,
			reason: 'left the site'
		});
	});

	it('AC5: only the events of the period are changes; roles and their "since" do not depend on it', async () => {
		const { id } = await newAccount('rev-period');
		const [created] = await eventsOf(id);
		const day = iso(created!.at)!.slice(0, 10);
		const before = new Date(Date.parse(`${day}T00:00:00Z`) - 86_400_000).toISOString().slice(0, 10);
		const past = await accessReview({ from: '2020-01-01', to: before });
		expect(past.changes.filter((c) => c.seq >= created!.seq)).toEqual([]);
		expect(past.accounts.find((a) => a.id === id)!.roles[0]!.since).toBe(iso(created!.at));
		const thatDay = await accessReview({ from: day, to: day });
		expect(thatDay.changes.some((c) => c.seq === created!.seq)).toBe(true);
	});

	it('AC5: the period defaults to the last 90 days up to today (UTC) and must not start after it ends', () => {
		const now = new Date('2026-12-02T10:00:00Z');
		expect(parsePeriodQuery(new URLSearchParams(''), now)).toEqual({
			ok: true,
			period: { from: '2026-09-04', to: '2026-12-02' } // 90 days, today included
		});
		expect(parsePeriodQuery(new URLSearchParams('from=&to='), now)).toMatchObject({ ok: true });
		expect(parsePeriodQuery(new URLSearchParams('from=2026-12-05&to=2026-12-01'), now)).toEqual({
			ok: false,
			field: 'from',
			message: 'The period starts after it ends: from (2026-12-05) is later than to (2026-12-01).'
		});
		expect(parsePeriodQuery(new URLSearchParams('from=2026-02-30'), now)).toMatchObject({
			ok: false,
			field: 'from'
		});
		expect(parsePeriodQuery(new URLSearchParams('format=csv'), now)).toMatchObject({
			ok: false,
			field: 'format'
		});
		expect(parseApiQuery(new URLSearchParams('format=csv&table=changes'), now)).toMatchObject({
			ok: true,
			format: 'csv',
			table: 'changes'
		});
	});
});

describe('last sign-in and recertification flags (AC5)', () => {
	it('AC5: the last sign-in is set by a sign-in over HTTP; before it the account is flagged as never signed in', async () => {
		const [before] =
			await t.ownerSql`select id, last_sign_in_at from accounts where username = 'tech2'`;
		const id = before!.id as string;
		const first = (await accessReview(period())).accounts.find((a) => a.id === id)!;
		expect(first.lastSignInAt).toBe(iso(before!.last_sign_in_at));
		if (!before!.last_sign_in_at) expect(first.flags).toContain('never_signed_in');

		const signedIn = await signInOverHttp(app.origin, 'tech2', DEMO_PASSWORD);
		expect(signedIn.cookie).toBeTruthy();
		const [after] = await t.ownerSql`select last_sign_in_at from accounts where id = ${id}`;
		expect(after!.last_sign_in_at).not.toBeNull();
		const then = (await accessReview(period())).accounts.find((a) => a.id === id)!;
		expect(then.lastSignInAt).toBe(iso(after!.last_sign_in_at));
		expect(then.flags).not.toContain('never_signed_in');
		expect(then.flags).not.toContain('dormant');
	});

	it('AC5: an account without a sign-in for 90 days, and a locked one, are flagged', async () => {
		const { id } = await newAccount('rev-dormant');
		// Set up the state the flags read (the owner may; the app role never updates this way).
		await t.ownerSql`update accounts set last_sign_in_at = now() - interval '91 days',
			locked_at = now() where id = ${id}`;
		const account = (await accessReview(period())).accounts.find((a) => a.id === id)!;
		expect(account.flags).toEqual(['dormant', 'locked']);
		expect(account.status).toBe('locked');
	});
});

describe('the export over HTTP (AC3, AT7)', () => {
	it('AC3: the roles CSV has one row per account and role, matching the accounts and the trail', async () => {
		const before = await exportCount();
		const response = await get(`/api/v1/access-review?format=csv&table=roles&from=2020-01-01`);
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toContain('text/csv');
		expect(response.headers.get('content-disposition')).toMatch(
			/^attachment; filename="countersign-access-roles-2020-01-01-to-\d{4}-\d{2}-\d{2}\.csv"$/
		);
		const [header, ...rows] = parseCsv(await response.text());
		expect(header).toEqual([
			'account_id',
			'username',
			'full_name',
			'email',
			'status',
			'role',
			'since',
			'granted_by',
			'grant_reason',
			'grant_seq',
			'last_sign_in_at',
			'created_at',
			'locked_at',
			'deactivated_at',
			'flags'
		]);
		const col = (name: string) => header!.indexOf(name);
		const db = (await t.ownerSql`select id, username, full_name, roles, last_sign_in_at
			from accounts order by username`) as unknown as {
			id: string;
			username: string;
			full_name: string;
			roles: string[];
			last_sign_in_at: Date | null;
		}[];
		const expected = db.flatMap((a) =>
			(a.roles.length ? [...a.roles].sort() : ['']).map((role) => [a.id, a.username, role])
		);
		expect(rows.map((r) => [r[col('account_id')], r[col('username')], r[col('role')]])).toEqual(
			expected
		);
		for (const r of rows) {
			const account = db.find((a) => a.id === r[col('account_id')])!;
			expect(r[col('full_name')]).toBe(account.full_name);
			expect(r[col('last_sign_in_at')]).toBe(iso(account.last_sign_in_at) ?? '');
			// "since" is the time of the event whose seq the row names, granting that role.
			const [grant] = await t.ownerSql`select at, entity_id, new_values from audit_event
				where seq = ${Number(r[col('grant_seq')])}`;
			expect(grant!.entity_id).toBe(account.id);
			expect((grant!.new_values as { roles: string[] }).roles).toContain(r[col('role')]);
			expect(r[col('since')]).toBe(iso(grant!.at));
		}
		expect(await exportCount()).toBe(before + 1);
		const [recorded] = await t.ownerSql`select actor_name, entity_type, new_values
			from audit_event where action = 'access_review.export' order by seq desc limit 1`;
		const [me] = await t.ownerSql`select full_name from accounts where username = 'inspector'`;
		expect(recorded).toEqual({
			actor_name: me!.full_name,
			entity_type: 'access_review',
			new_values: { format: 'csv', table: 'roles', from: '2020-01-01', to: today() }
		});
	});

	it('AC3 AT7: the changes CSV lists the role grants and revocations of the period, as the trail holds them', async () => {
		const from = today();
		const response = await get(`/api/v1/access-review?format=csv&table=changes&from=${from}`);
		expect(response.status).toBe(200);
		const [header, ...rows] = parseCsv(await response.text());
		expect(header).toEqual([
			'seq',
			'at',
			'action',
			'account_id',
			'username',
			'full_name',
			'added',
			'removed',
			'by',
			'reason'
		]);
		const expected =
			(await t.ownerSql`select seq::int as seq, at, action, entity_id, actor_name, reason
			from audit_event where entity_type = 'account' and at >= ${from}::date
			and action in ('account.create', 'account.roles_change', 'account.deactivate', 'auth.lockout', 'auth.unlock')
			order by seq`) as unknown as {
				seq: number;
				at: Date;
				action: string;
				entity_id: string;
				actor_name: string;
				reason: string | null;
			}[];
		expect(expected.length).toBeGreaterThan(3);
		expect(rows.map((r) => [Number(r[0]), r[1], r[2], r[3], r[8], r[9]])).toEqual(
			expected.map((e) => [e.seq, iso(e.at), e.action, e.entity_id, e.actor_name, e.reason ?? ''])
		);
		// A revocation is there with the role it took away.
		const [revoked] = await t.ownerSql`select seq::int as seq, previous_values, new_values
			from audit_event where action = 'account.roles_change'
			and jsonb_array_length(previous_values->'roles') > jsonb_array_length(new_values->'roles')
			order by seq limit 1`;
		const row = rows.find((r) => Number(r[0]) === revoked!.seq)!;
		const gone = (revoked!.previous_values as { roles: string[] }).roles.filter(
			(r) => !(revoked!.new_values as { roles: string[] }).roles.includes(r)
		);
		expect(row[7]).toBe(gone.join(';'));
	});

	it('AC3: a cell a spreadsheet would run as a formula is led by an apostrophe', async () => {
		const { id } = await newAccount('rev-formula', '=HYPERLINK("x")');
		const text = await (await get('/api/v1/access-review?format=csv&table=roles')).text();
		const row = parseCsv(text).find((r) => r[0] === id)!;
		expect(row[2]).toBe(`'=HYPERLINK("x")`);
	});

	it('AC5 AT7: the JSON review holds accounts and changes; each export is one audit event', async () => {
		const before = await exportCount();
		const response = await get('/api/v1/access-review');
		expect(response.status).toBe(200);
		expect(response.headers.get('content-disposition')).toMatch(
			/^attachment; filename=".*\.json"$/
		);
		const body = await response.json();
		const count = await t.ownerSql`select count(*)::int as n from accounts`;
		expect(body.accounts).toHaveLength(count[0]!.n);
		expect(Array.isArray(body.changes)).toBe(true);
		expect(body.period.to).toBe(today());
		const onlyChanges = await (await get('/api/v1/access-review?table=changes')).json();
		expect(onlyChanges.accounts).toBeUndefined();
		expect(Array.isArray(onlyChanges.changes)).toBe(true);
		// The widest period a date input can give is still an answer, not a server error.
		const widest = await get('/api/v1/access-review?from=0001-01-01&to=9999-12-31');
		expect(widest.status).toBe(200);
		expect((await widest.json()).changes.length).toBeGreaterThanOrEqual(body.changes.length);
		expect(await exportCount()).toBe(before + 3);
		const recorded = await t.ownerSql`select new_values from audit_event
			where action = 'access_review.export' order by seq desc limit 3`;
		expect(recorded.map((r) => r.new_values)).toEqual([
			{ format: 'json', table: null, from: '0001-01-01', to: '9999-12-31' },
			{ format: 'json', table: 'changes', from: body.period.from, to: body.period.to },
			{ format: 'json', table: null, from: body.period.from, to: body.period.to }
		]);
	});

	it('AT7: a bad date, from after to, CSV without table, an unknown parameter: 400 {message, field}, nothing recorded', async () => {
		const before = await exportCount();
		const cases: [string, string][] = [
			['from=2026-13-01', 'from'],
			['to=yesterday', 'to'],
			['from=2026-12-05&to=2026-12-01', 'from'],
			['format=csv', 'table'],
			['format=xlsx', 'format'],
			['table=people', 'table'],
			['colour=red', 'colour'],
			['from=2026-01-01&from=2026-02-01', 'from']
		];
		for (const [query, field] of cases) {
			const response = await get(`/api/v1/access-review?${query}`);
			expect(response.status, query).toBe(400);
			expect(response.headers.get('content-type'), query).toContain('application/json');
			const body = await response.json();
			expect(Object.keys(body).sort(), query).toEqual(['field', 'message']);
			expect(body.field, query).toBe(field);
			expect(body.message, query).toMatch(/\w{3,}/);
		}
		expect(await exportCount()).toBe(before);
	});

	it('AC5: the page says what is wrong with a bad period instead of an error page', async () => {
		const response = await get('/access-review?from=2026-12-05&to=2026-12-01');
		expect(response.status).toBe(200);
		const html = await response.text();
		expect(html).toContain('The period starts after it ends');
		expect(html).toContain('Access review');
	});

	it('AT7: a technician may not open the review or export it (403), and the refusal is audited', async () => {
		const tech = (await signInOverHttp(app.origin, 'tech1', DEMO_PASSWORD)).cookie!;
		const before = await exportCount();
		expect((await get('/api/v1/access-review?format=csv&table=roles', tech)).status).toBe(403);
		expect((await fetch(`${app.origin}/access-review`, { headers: { cookie: tech } })).status).toBe(
			403
		);
		expect(await exportCount()).toBe(before);
		const [denied] = await t.ownerSql`select new_values from audit_event
			where action = 'auth.access_denied' order by seq desc limit 1`;
		expect(denied!.new_values).toMatchObject({ path: '/access-review' });
	});
});
