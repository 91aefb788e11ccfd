import { asc, eq, sql } from 'drizzle-orm';
import { randomInt } from 'node:crypto';
import type { Role } from '$lib/roles';
import { recordEvent, type Actor } from './audit/index';
import type { User } from './auth/guard';
import { countFailedPassword, lockIfDue } from './auth/lockout';
import { hashPassword, passwordProblems, verifyPassword } from './auth/passwords';
import { endSessionsOf } from './auth/sessions';
import { db } from './db/index';
import { accounts } from './db/schema/index';
import { kickOutbox } from './outbox';

/** Thrown for a refused change; `field` names the form field the message belongs beside. */
export class AccountError extends Error {
	constructor(
		message: string,
		readonly field?: string,
		readonly status = 400
	) {
		super(message);
	}
}

const person = (user: User): Actor => ({
	kind: 'person',
	id: user.id,
	name: user.name,
	roles: user.roles
});

/** No look-alike characters (0/o, 1/l/i): read aloud or copied from a screen without mistakes. */
const alphabet = 'abcdefghjkmnpqrstuvwxyz23456789';
/** A one-time password: 4 groups of 5, e.g. "k7hwp-3m9qt-xr4vd-c2nfj" (≈ 99 bits). */
export function oneTimePassword() {
	const group = () =>
		Array.from({ length: 5 }, () => alphabet[randomInt(alphabet.length)]).join('');
	return [group(), group(), group(), group()].join('-');
}

const listColumns = {
	id: accounts.id,
	username: accounts.username,
	fullName: accounts.fullName,
	email: accounts.email,
	roles: accounts.roles,
	active: accounts.active,
	lockedAt: accounts.lockedAt,
	mustChangePassword: accounts.mustChangePassword,
	failedSignIns: accounts.failedSignIns,
	lastSignInAt: accounts.lastSignInAt,
	createdAt: accounts.createdAt,
	deactivatedAt: accounts.deactivatedAt
};

export function listAccounts() {
	return db().select(listColumns).from(accounts).orderBy(asc(accounts.username));
}

export async function getAccount(id: string) {
	const [account] = await db().select(listColumns).from(accounts).where(eq(accounts.id, id));
	return account;
}

export function lockedAccounts() {
	return db()
		.select({
			id: accounts.id,
			username: accounts.username,
			fullName: accounts.fullName,
			lockedAt: accounts.lockedAt
		})
		.from(accounts)
		.where(sql`${accounts.lockedAt} is not null and ${accounts.active}`)
		.orderBy(asc(accounts.lockedAt));
}

/**
 * Creates an account with a one-time password that must be changed at first sign-in (ES6).
 * A username is never given twice, not even after deactivation (ES5).
 */
export async function createAccount(
	admin: User,
	input: { username: string; fullName: string; email: string; roles: Role[] },
	clientAddress: string | null
) {
	const password = oneTimePassword();
	const passwordHash = await hashPassword(password);
	try {
		return await db().transaction(async (tx) => {
			const [created] = await tx
				.insert(accounts)
				.values({ ...input, passwordHash, mustChangePassword: true })
				.returning({ id: accounts.id, username: accounts.username });
			await recordEvent(tx, {
				actor: person(admin),
				action: 'account.create',
				entityType: 'account',
				entityId: created!.id,
				newValues: {
					username: input.username,
					fullName: input.fullName,
					email: input.email,
					roles: input.roles
				},
				clientAddress
			});
			return { ...created!, oneTimePassword: password };
		});
	} catch (e) {
		if (
			(e as { cause?: { code?: string } }).cause?.code === '23505' ||
			(e as { code?: string }).code === '23505'
		) {
			throw new AccountError(
				'This username has been used before. Usernames are never reused, even after deactivation: choose another.',
				'username',
				409
			);
		}
		throw e;
	}
}

async function load(id: string) {
	const [account] = await db().select().from(accounts).where(eq(accounts.id, id));
	if (!account) throw new AccountError('No such account.', undefined, 404);
	return account;
}

export async function changeRoles(
	admin: User,
	id: string,
	roles: Role[],
	reason: string,
	clientAddress: string | null
) {
	if (id.toLowerCase() === admin.id.toLowerCase())
		throw new AccountError(
			'Nobody changes their own roles: ask another administrator.',
			'roles',
			403
		);
	const account = await load(id);
	const sorted = [...new Set(roles)].sort();
	await db().transaction(async (tx) => {
		await tx.update(accounts).set({ roles: sorted }).where(eq(accounts.id, id));
		await recordEvent(tx, {
			actor: person(admin),
			action: 'account.roles_change',
			entityType: 'account',
			entityId: id,
			newValues: { roles: sorted },
			previousValues: { roles: account.roles },
			reason,
			clientAddress
		});
	});
}

export async function deactivateAccount(
	admin: User,
	id: string,
	reason: string,
	clientAddress: string | null
) {
	if (id.toLowerCase() === admin.id.toLowerCase())
		throw new AccountError('You cannot deactivate your own account.', 'reason', 403);
	const account = await load(id);
	if (!account.active)
		throw new AccountError('This account is already deactivated.', 'reason', 409);
	await db().transaction(async (tx) => {
		await tx
			.update(accounts)
			.set({ active: false, deactivatedAt: sql`now()` })
			.where(eq(accounts.id, id));
		await recordEvent(tx, {
			actor: person(admin),
			action: 'account.deactivate',
			entityType: 'account',
			entityId: id,
			newValues: { active: false },
			previousValues: { active: true },
			reason,
			clientAddress
		});
		await endSessionsOf(tx, id, 'deactivated');
	});
}

export async function unlockAccount(
	admin: User,
	id: string,
	reason: string,
	clientAddress: string | null
) {
	const account = await load(id);
	const lockedAt = account.lockedAt;
	if (!lockedAt) throw new AccountError('This account is not locked.', 'reason', 409);
	await db().transaction(async (tx) => {
		await tx.update(accounts).set({ lockedAt: null, failedSignIns: 0 }).where(eq(accounts.id, id));
		await recordEvent(tx, {
			actor: person(admin),
			action: 'auth.unlock',
			entityType: 'account',
			entityId: id,
			newValues: { locked: false },
			previousValues: {
				locked: true,
				lockedAt: lockedAt.toISOString(),
				consecutiveFailures: account.failedSignIns
			},
			reason,
			clientAddress
		});
	});
}

/** Issues a one-time password, shown once to the administrator; every open session of the account ends. */
export async function resetPassword(
	admin: User,
	id: string,
	reason: string,
	clientAddress: string | null
) {
	if (id.toLowerCase() === admin.id.toLowerCase())
		throw new AccountError('Change your own password on your account page instead.', 'reason', 403);
	const account = await load(id);
	if (!account.active) throw new AccountError('This account is deactivated.', 'reason', 409);
	const password = oneTimePassword();
	const passwordHash = await hashPassword(password);
	await db().transaction(async (tx) => {
		await tx
			.update(accounts)
			.set({ passwordHash, mustChangePassword: true, passwordChangedAt: sql`now()` })
			.where(eq(accounts.id, id));
		await recordEvent(tx, {
			actor: person(admin),
			action: 'account.password_reset',
			entityType: 'account',
			entityId: id,
			newValues: { mustChangePassword: true },
			reason,
			clientAddress
		});
		await endSessionsOf(tx, id, 'password_reset');
	});
	return password;
}

/**
 * A person changes their own password: the current one is required, the new one must pass the
 * rules and differ from it. Every session of the account ends, this one too: sign in again.
 */
export async function changeOwnPassword(
	user: User,
	input: { currentPassword: string; newPassword: string },
	clientAddress: string | null
) {
	const account = await load(user.id);
	if (!(await verifyPassword(account.passwordHash, input.currentPassword))) {
		// Counts toward the lockout like a failed sign-in (an unattended session must not allow guessing).
		await db().transaction(async (tx) => {
			const count = await countFailedPassword(tx, user.id);
			await recordEvent(tx, {
				actor: person(user),
				action: 'account.password_change_failed',
				entityType: 'account',
				entityId: user.id,
				newValues: { reason: 'wrong_current_password', consecutiveFailures: count.failures },
				clientAddress
			});
			await lockIfDue(tx, account, count, clientAddress);
		});
		kickOutbox(); // the Administrators' e-mail, when it locked
		throw new AccountError(
			'That is not your current password. Five wrong passwords in a row lock the account.',
			'currentPassword',
			400
		);
	}

	const problems = passwordProblems(input.newPassword, {
		username: account.username,
		fullName: account.fullName
	});
	if (problems.length > 0) throw new AccountError(problems.join(' '), 'newPassword', 400);
	if (await verifyPassword(account.passwordHash, input.newPassword)) {
		throw new AccountError('Choose a password different from the current one.', 'newPassword', 400);
	}
	const passwordHash = await hashPassword(input.newPassword);
	await db().transaction(async (tx) => {
		await tx
			.update(accounts)
			.set({ passwordHash, mustChangePassword: false, passwordChangedAt: sql`now()` })
			.where(eq(accounts.id, user.id));
		await recordEvent(tx, {
			actor: person(user),
			action: 'account.password_change',
			entityType: 'account',
			entityId: user.id,
			newValues: { mustChangePassword: false },
			previousValues: { mustChangePassword: account.mustChangePassword },
			clientAddress
		});
		await endSessionsOf(tx, user.id, 'password_changed');
	});
}
