import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { freshDatabase, type TestDatabase } from './helpers/database';

// The app connects as the application role, which migrations grant SELECT and INSERT only;
// migrations run as the owner role (DESIGN.md "Records, audit trail, signatures"; REQUIREMENTS
// AT1: the app's DB role has no UPDATE/DELETE). Append-only triggers for GMP tables come in 3/10.
let t: TestDatabase;
beforeAll(async () => {
	t = await freshDatabase();
});
afterAll(async () => t?.drop());

const PERMISSION_DENIED = '42501'; // PostgreSQL SQLSTATE insufficient_privilege

describe('the application role', () => {
	it('connects and reads as countersign_app, not as the owner', async () => {
		const [me] = await t.appSql`select current_user as role, session_user as session`;
		expect(me).toEqual({ role: 'countersign_app', session: 'countersign_app' });
		const owners =
			await t.appSql`select distinct tableowner from pg_tables where schemaname = 'public'`;
		expect(owners.map((r) => r.tableowner)).toEqual(['countersign_owner']);
	});

	it('may add rows', async () => {
		const [site] = await t.appSql`
			insert into sites (code, name, time_zone) values ('T1', 'Test site', 'UTC') returning id`;
		expect(site?.id).toMatch(/^[0-9a-f-]{36}$/);
	});

	it.each([
		['UPDATE', (sql: TestDatabase['appSql']) => sql`update sites set name = 'changed'`],
		['DELETE', (sql: TestDatabase['appSql']) => sql`delete from sites`],
		['TRUNCATE', (sql: TestDatabase['appSql']) => sql`truncate areas`],
		['DROP', (sql: TestDatabase['appSql']) => sql`drop table areas`],
		['CREATE', (sql: TestDatabase['appSql']) => sql`create table intruder (id int)`]
	])('may not %s', async (_verb, statement) => {
		await expect(statement(t.appSql)).rejects.toMatchObject({ code: PERMISSION_DENIED });
	});

	it('cannot read or rewrite the migration journal', async () => {
		await expect(t.appSql`select * from drizzle.__drizzle_migrations`).rejects.toMatchObject({
			code: PERMISSION_DENIED
		});
	});

	it('keeps rows it could not change unchanged', async () => {
		const rows = await t.ownerSql`select name from sites where code = 'T1'`;
		expect(rows).toEqual([{ name: 'Test site' }]);
	});
});

describe('the owner role', () => {
	it('has applied every migration in drizzle/ to the template', async () => {
		const journal = (await import('../../drizzle/meta/_journal.json')).default;
		const applied = await t.ownerSql`select count(*)::int as n from drizzle.__drizzle_migrations`;
		expect(applied[0]?.n).toBe(journal.entries.length);
	});
});

describe('a test database', () => {
	it('is closed to roles other than the two of Countersign', async () => {
		const [row] = await t.ownerSql`
			select has_database_privilege('public', current_database(), 'CONNECT') as public_connect`;
		expect(row?.public_connect).toBe(false);
	});
});
