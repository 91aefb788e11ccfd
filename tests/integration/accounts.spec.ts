import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as accounts from '../../src/lib/server/accounts';
import type { User } from '../../src/lib/server/auth/guard';
import { verifyPassword } from '../../src/lib/server/auth/passwords';
import { checkSession, openSession } from '../../src/lib/server/auth/sessions';
import { seedDemoAccounts } from '../../src/lib/server/db/seed';
import { appDatabase, setEnv } from './helpers/app-database';

// Account administration and sessions against the real database (issue 2/10).
// REQUIREMENTS: ES5 (usernames never reused), ES6 (one-time password), SE1–SE3 (rules),
// AC6 (deactivation at once), SE7 (idle/absolute timeouts), AT7 (account events).
let t: Awaited<ReturnType<typeof appDatabase>>;
let admin: User;
const ip = '198.51.100.7'; // RFC 5737 documentation range

beforeAll(async () => {
	t = await appDatabase();
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
});
afterAll(async () => t?.drop());

const eventsOf = (id: string) =>
	t.ownerSql`select action, actor_name, new_values, previous_values, reason from audit_event
		where entity_id = ${id} order by seq`;

async function newAccount(username: string) {
	return accounts.createAccount(
		admin,
		{
			username,
			fullName: 'Rhea Sandoval',
			email: `${username}@ostmere.example`,
			roles: ['technician']
		},
		ip
	);
}

describe('creating accounts', () => {
	it('issues a one-time password that must be changed, and records account.create (ES6, AT7)', async () => {
		const created = await newAccount('rsandoval');
		expect(created.oneTimePassword).toMatch(/^[a-z2-9]{5}(-[a-z2-9]{5}){3}$/);
		const [row] =
			await t.ownerSql`select must_change_password, password_hash from accounts where id = ${created.id}`;
		expect(row!.must_change_password).toBe(true);
		expect(await verifyPassword(row!.password_hash, created.oneTimePassword)).toBe(true);
		expect(await eventsOf(created.id)).toEqual([
			expect.objectContaining({
				action: 'account.create',
				actor_name: 'Adaeze Runström',
				new_values: {
					username: 'rsandoval',
					fullName: 'Rhea Sandoval',
					email: 'rsandoval@ostmere.example',
					roles: ['technician']
				}
			})
		]);
	});

	it('refuses a username used before, even after deactivation, and stores nothing (ES5)', async () => {
		const created = await newAccount('once-only');
		await accounts.deactivateAccount(admin, created.id, 'left the site', ip);
		await expect(newAccount('once-only')).rejects.toMatchObject({
			field: 'username',
			status: 409,
			message: expect.stringContaining('Usernames are never reused')
		});
		const rows =
			await t.ownerSql`select count(*)::int as n from accounts where username = 'once-only'`;
		expect(rows[0]!.n).toBe(1);
	});

	it('the database itself refuses a changed username: the app role may not update it', async () => {
		await expect(
			t.appSql`update accounts set username = 'someone-else' where username = 'tech1'`
		).rejects.toMatchObject({
			code: '42501'
		});
	});
});

describe('roles, deactivation, unlock, reset', () => {
	it('changes roles with a reason, old and new recorded; nobody changes their own roles', async () => {
		const { id } = await newAccount('roles-change');
		await accounts.changeRoles(
			admin,
			id,
			['planner', 'technician'],
			'now plans the weekly work',
			ip
		);
		const change = (await eventsOf(id)).find((e) => e.action === 'account.roles_change');
		expect(change).toMatchObject({
			new_values: { roles: ['planner', 'technician'] },
			previous_values: { roles: ['technician'] },
			reason: 'now plans the weekly work'
		});
		await expect(
			accounts.changeRoles(admin, admin.id, ['administrator', 'quality'], 'self', ip)
		).rejects.toMatchObject({ status: 403 });
		// Not even with the id written in capitals (PostgreSQL reads it as the same uuid).
		await expect(
			accounts.changeRoles(admin, admin.id.toUpperCase(), ['quality'], 'self', ip)
		).rejects.toMatchObject({
			status: 403
		});
		const [me] = await t.ownerSql`select roles from accounts where id = ${admin.id}`;
		expect(me!.roles).toEqual(['administrator']);
	});

	it('deactivation ends open sessions at once (AC6) and is recorded', async () => {
		const { id } = await newAccount('to-deactivate');
		const sid = await openSession(id, ip, 'test');
		expect(await checkSession(sid)).toMatchObject({ username: 'to-deactivate' });
		await accounts.deactivateAccount(admin, id, 'contract ended', ip);
		expect(await checkSession(sid)).toBeNull();
		const actions = (await eventsOf(id)).map((e) => e.action);
		expect(actions).toEqual([
			'account.create',
			'auth.sign_in',
			'account.deactivate',
			'auth.session_end'
		]);
		await expect(accounts.deactivateAccount(admin, admin.id, 'self', ip)).rejects.toMatchObject({
			status: 403
		});
	});

	it('unlocks a locked account, resetting the failure count, with the reason', async () => {
		const { id } = await newAccount('locked-one');
		await t.ownerSql`update accounts set locked_at = now(), failed_sign_ins = 5 where id = ${id}`;
		await accounts.unlockAccount(admin, id, 'confirmed by phone', ip);
		const [row] =
			await t.ownerSql`select locked_at, failed_sign_ins from accounts where id = ${id}`;
		expect(row).toEqual({ locked_at: null, failed_sign_ins: 0 });
		const unlock = (await eventsOf(id)).find((e) => e.action === 'auth.unlock');
		expect(unlock).toMatchObject({
			reason: 'confirmed by phone',
			previous_values: { locked: true, consecutiveFailures: 5 }
		});
		await expect(accounts.unlockAccount(admin, id, 'again', ip)).rejects.toMatchObject({
			status: 409
		});
	});

	it('a password reset issues a new one-time password and ends every session', async () => {
		const { id } = await newAccount('reset-me');
		const sid = await openSession(id, ip, 'test');
		const password = await accounts.resetPassword(admin, id, 'forgot password', ip);
		expect(await checkSession(sid)).toBeNull();
		const [row] =
			await t.ownerSql`select must_change_password, password_hash from accounts where id = ${id}`;
		expect(row!.must_change_password).toBe(true);
		expect(await verifyPassword(row!.password_hash, password)).toBe(true);
		expect((await eventsOf(id)).map((e) => e.action)).toContain('account.password_reset');
	});
});

describe('changing one’s own password', () => {
	async function person() {
		const username = `self-${Math.random().toString(36).slice(2, 8)}`;
		const created = await newAccount(username);
		const user: User = {
			id: created.id,
			username,
			name: 'Rhea Sandoval',
			email: '',
			roles: ['technician'],
			mustChangePassword: true
		};
		return { user, current: created.oneTimePassword };
	}

	it.each([
		['fourteen chars', /at least 15 characters \(this has 14\)/],
		['123456789987654321', /most common passwords/],
		['tulipstulipstulips', /repeated pattern/],
		['my countersign passphrase', /name of this application/],
		['rhea goes walking by the sea', /your own name/]
	])(
		'refuses %j with a clear message beside the new password (SE1, SE2)',
		async (newPassword, message) => {
			const { user, current } = await person();
			await expect(
				accounts.changeOwnPassword(user, { currentPassword: current, newPassword }, ip)
			).rejects.toMatchObject({
				field: 'newPassword',
				message: expect.stringMatching(message)
			});
			const [row] =
				await t.ownerSql`select must_change_password from accounts where id = ${user.id}`;
			expect(row!.must_change_password).toBe(true); // nothing changed
		}
	);

	it('refuses a wrong current password and records the attempt', async () => {
		const { user } = await person();
		await expect(
			accounts.changeOwnPassword(
				user,
				{ currentPassword: 'not it', newPassword: 'quiet harbour lights at dusk' },
				ip
			)
		).rejects.toMatchObject({ field: 'currentPassword' });
		expect((await eventsOf(user.id)).map((e) => e.action)).toContain(
			'account.password_change_failed'
		);
		// It counts toward the lockout like a failed sign-in.
		const [row] = await t.ownerSql`select failed_sign_ins from accounts where id = ${user.id}`;
		expect(row!.failed_sign_ins).toBe(1);
	});

	it('accepts a 64-character all-lowercase passphrase (SE1, SE3), ends sessions, records the change', async () => {
		const { user, current } = await person();
		const sid = await openSession(user.id, ip, 'test');
		const newPassword = 'marble orchard lantern velvet compass thistle harbour quietly no';
		await accounts.changeOwnPassword(user, { currentPassword: current, newPassword }, ip);
		expect(await checkSession(sid)).toBeNull();
		const [row] =
			await t.ownerSql`select must_change_password, password_hash from accounts where id = ${user.id}`;
		expect(row!.must_change_password).toBe(false);
		expect(await verifyPassword(row!.password_hash, newPassword)).toBe(true);
		expect((await eventsOf(user.id)).map((e) => e.action)).toEqual(
			expect.arrayContaining(['account.password_change', 'auth.session_end'])
		);
	});
});

describe('session timeouts (SE7), on the database clock', () => {
	it('ends a session idle for longer than the idle limit', async () => {
		setEnv({ SESSION_IDLE_MINUTES: '15' });
		const [tech] = await t.ownerSql`select id from accounts where username = 'tech1'`;
		const sid = await openSession(tech!.id, ip, 'test');
		await t.ownerSql`update sessions set last_seen_at = now() - interval '14 minutes' where id = ${sid}`;
		expect(await checkSession(sid)).not.toBeNull(); // 14 minutes: still fine, and seen now
		await t.ownerSql`update sessions set last_seen_at = now() - interval '15 minutes 1 second' where id = ${sid}`;
		expect(await checkSession(sid)).toBeNull();
		const [row] = await t.ownerSql`select end_reason from sessions where id = ${sid}`;
		expect(row!.end_reason).toBe('idle');
	});

	it('ends a session older than the absolute limit even when in use', async () => {
		setEnv({ SESSION_ABSOLUTE_HOURS: '12' });
		const [tech] = await t.ownerSql`select id from accounts where username = 'tech2'`;
		const sid = await openSession(tech!.id, ip, 'test');
		await t.ownerSql`update sessions set created_at = now() - interval '12 hours 1 second' where id = ${sid}`;
		expect(await checkSession(sid)).toBeNull();
		const [row] = await t.ownerSql`select end_reason from sessions where id = ${sid}`;
		expect(row!.end_reason).toBe('absolute');
	});
});

describe('the audit table', () => {
	it('refuses UPDATE, DELETE and TRUNCATE, even for the owner role (append-only trigger)', async () => {
		await expect(t.ownerSql`update audit_event set reason = 'changed'`).rejects.toThrow(
			/append-only/
		);
		await expect(t.ownerSql`delete from audit_event`).rejects.toThrow(/append-only/);
		await expect(t.ownerSql`truncate audit_event`).rejects.toThrow(/append-only/);
		await expect(t.appSql`update audit_event set reason = 'changed'`).rejects.toMatchObject({
			code: '42501'
		});
	});
});
