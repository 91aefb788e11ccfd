import { and, eq, isNull, sql } from 'drizzle-orm';
import { recordEvent } from '../audit/index';
import { db, type Transaction } from '../db/index';
import { accounts, sessions } from '../db/schema/index';
import type { User } from './guard';
import { authSettings } from './settings';

/** The signed-in person (guard.ts `User`) and the id of the session being checked. */
export type SessionUser = User & { sessionId: string };

export type EndReason =
	| 'sign_out'
	| 'idle'
	| 'absolute'
	| 'deactivated'
	| 'locked'
	| 'password_changed'
	| 'password_reset';

/** Opens a server-side session after a successful sign-in and records the sign-in. */
export async function openSession(
	accountId: string,
	clientAddress: string | null,
	userAgent: string | null
) {
	return db().transaction(async (tx) => {
		const [session] = await tx
			.insert(sessions)
			.values({ accountId, clientAddress, userAgent: userAgent?.slice(0, 400) ?? null })
			.returning({ id: sessions.id });
		const [account] = await tx.select().from(accounts).where(eq(accounts.id, accountId));
		await recordEvent(tx, {
			actor: { kind: 'person', id: accountId, name: account!.fullName, roles: account!.roles },
			action: 'auth.sign_in',
			entityType: 'account',
			entityId: accountId,
			newValues: { username: account!.username, sessionId: session!.id },
			clientAddress
		});
		return session!.id;
	});
}

/**
 * Ends a session once (a second call finds it ended and does nothing) and records why.
 * @returns whether this call ended it
 */
export async function endSession(
	tx: Transaction,
	sessionId: string,
	reason: EndReason,
	clientAddress: string | null = null
) {
	const [ended] = await tx
		.update(sessions)
		.set({ endedAt: sql`now()`, endReason: reason })
		.where(and(eq(sessions.id, sessionId), isNull(sessions.endedAt)))
		.returning({ accountId: sessions.accountId });
	if (!ended) return false;
	const [account] = await tx.select().from(accounts).where(eq(accounts.id, ended.accountId));
	const byPerson = reason === 'sign_out';
	await recordEvent(tx, {
		actor: byPerson
			? { kind: 'person', id: account!.id, name: account!.fullName, roles: account!.roles }
			: { kind: 'system', name: 'system: session guard' },
		action: byPerson ? 'auth.sign_out' : 'auth.session_end',
		entityType: 'account',
		entityId: account!.id,
		newValues: { username: account!.username, sessionId, reason },
		clientAddress
	});
	return true;
}

/** Ends every open session of an account (deactivation, password reset, password change). */
export async function endSessionsOf(
	tx: Transaction,
	accountId: string,
	reason: EndReason,
	except?: string
) {
	const open = await tx
		.select({ id: sessions.id })
		.from(sessions)
		.where(and(eq(sessions.accountId, accountId), isNull(sessions.endedAt)));
	for (const s of open) if (s.id !== except) await endSession(tx, s.id, reason);
}

/**
 * Checks a session on a request and, when it still holds, marks it seen. Ends it (recording
 * why) when the account is deactivated or locked, or the idle or absolute time has passed.
 * Uses the database clock only.
 */
export async function checkSession(sessionId: string): Promise<SessionUser | null> {
	const settings = authSettings();
	const [row] = await db()
		.select({
			endedAt: sessions.endedAt,
			idleSeconds: sql<number>`extract(epoch from (now() - ${sessions.lastSeenAt}))::float8`,
			ageSeconds: sql<number>`extract(epoch from (now() - ${sessions.createdAt}))::float8`,
			account: {
				id: accounts.id,
				username: accounts.username,
				name: accounts.fullName,
				email: accounts.email,
				roles: accounts.roles,
				mustChangePassword: accounts.mustChangePassword,
				active: accounts.active,
				lockedAt: accounts.lockedAt
			}
		})
		.from(sessions)
		.innerJoin(accounts, eq(accounts.id, sessions.accountId))
		.where(eq(sessions.id, sessionId));
	if (!row || row.endedAt) return null;

	const reason: EndReason | null = !row.account.active
		? 'deactivated'
		: row.account.lockedAt
			? 'locked'
			: row.idleSeconds > settings.SESSION_IDLE_MINUTES * 60
				? 'idle'
				: row.ageSeconds > settings.SESSION_ABSOLUTE_HOURS * 3600
					? 'absolute'
					: null;
	if (reason) {
		await db().transaction((tx) => endSession(tx, sessionId, reason));
		return null;
	}
	await db()
		.update(sessions)
		.set({ lastSeenAt: sql`now()` })
		// Only a session that is still within its idle time is touched: a request that read the row a moment
		// before the idle limit passed must not bring an idle session back to life.
		.where(
			and(
				eq(sessions.id, sessionId),
				isNull(sessions.endedAt),
				sql`${sessions.lastSeenAt} > now() - ${settings.SESSION_IDLE_MINUTES * 60}::float8 * interval '1 second'`
			)
		);
	const { active: _active, lockedAt: _lockedAt, ...account } = row.account;
	return { ...account, sessionId };
}
