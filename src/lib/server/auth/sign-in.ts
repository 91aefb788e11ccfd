import { eq, sql } from 'drizzle-orm';
import { recordEvent } from '../audit/index';
import { db } from '../db/index';
import { accounts } from '../db/schema/index';
import { kickOutbox } from '../outbox';
import { hit } from '../rate-limit';
import { countFailedPassword, lockIfDue } from './lockout';
import { decoyHash, verifyPassword } from './passwords';
import { authSettings } from './settings';
import { clearFailures, recordFailure, secondsToWait, throttleKeys } from './throttle';

export type SignInResult =
	| { ok: true; account: { id: string; username: string; name: string; email: string } }
	| {
			ok: false;
			code: 'credentials' | 'locked' | 'throttled';
			retryAfter?: number;
			lockedNow?: boolean;
	  };

export const normaliseUsername = (username: string) => username.trim().toLowerCase();

/**
 * One sign-in attempt, with every rule of REQUIREMENTS SE5 and AT7: the progressive delay per
 * username and per address, the lockout after N consecutive failures (cleared only by an
 * administrator), the same answer and the same work for an unknown username as for a wrong
 * password, and an audit event for every failure. The session itself is opened by Auth.js's
 * jwt callback (sessions.openSession), which records the sign-in.
 */
export async function attemptSignIn(input: {
	username: string;
	password: string;
	clientAddress: string;
}): Promise<SignInResult> {
	const settings = authSettings();
	const username = normaliseUsername(input.username);
	const keys = throttleKeys(username, input.clientAddress, settings);
	const anonymous = { kind: 'anonymous' } as const;
	const clientAddress = input.clientAddress;

	// Attempts per address and minute, right or wrong (rate-limit.ts), before any other work.
	const rate = hit('sign_in_address', clientAddress);
	if (!rate.ok) {
		await db().transaction((tx) =>
			recordEvent(tx, {
				actor: anonymous,
				action: 'auth.sign_in_failed',
				entityType: 'account',
				newValues: { username, reason: 'rate_limited', retryAfterSeconds: rate.retryAfter },
				clientAddress
			})
		);
		return { ok: false, code: 'throttled', retryAfter: rate.retryAfter };
	}

	// One transaction, with the account's row locked from the first check to the last write:
	// parallel guesses at one account queue up, each sees the count the one before left, and
	// none gets past the lockout (nor resets it).
	const result = await db().transaction(async (tx): Promise<SignInResult> => {
		// A locked account says so first: waiting would not help it.
		const [account] = await tx
			.select()
			.from(accounts)
			.where(eq(accounts.username, username))
			.for('update');
		if (account?.lockedAt && account.active) {
			await recordEvent(tx, {
				actor: anonymous,
				action: 'auth.sign_in_failed',
				entityType: 'account',
				entityId: account.id,
				newValues: { username, reason: 'locked' },
				clientAddress
			});
			return { ok: false, code: 'locked' };
		}

		const wait = await secondsToWait(tx, keys, settings);
		if (wait > 0) {
			await recordEvent(tx, {
				actor: anonymous,
				action: 'auth.sign_in_failed',
				entityType: 'account',
				newValues: { username, reason: 'throttled', retryAfterSeconds: wait },
				clientAddress
			});
			return { ok: false, code: 'throttled', retryAfter: wait };
		}

		// Unknown usernames cost one argon2 verification too, so timing does not tell them apart.
		const passwordMatches = await verifyPassword(
			account?.passwordHash ?? (await decoyHash()),
			input.password
		);
		if (account?.active && passwordMatches) {
			// Only the username's count: a sign-in to some other account must not reset the
			// address's count (or one valid account would let an address guess at all the others).
			await clearFailures(tx, keys.slice(0, 1));
			await tx
				.update(accounts)
				.set({ failedSignIns: 0, lastSignInAt: sql`now()` })
				.where(eq(accounts.id, account.id));
			return {
				ok: true,
				account: {
					id: account.id,
					username: account.username,
					name: account.fullName,
					email: account.email
				}
			};
		}

		await recordFailure(tx, keys, settings);
		const reason = !account
			? 'unknown_username'
			: !account.active
				? 'deactivated'
				: 'wrong_password';
		const counted = account?.active ? await countFailedPassword(tx, account.id) : undefined;
		await recordEvent(tx, {
			actor: anonymous,
			action: 'auth.sign_in_failed',
			entityType: 'account',
			entityId: account?.id ?? null,
			newValues: {
				username,
				reason,
				...(counted ? { consecutiveFailures: counted.failures } : {})
			},
			clientAddress
		});
		if (account && counted && (await lockIfDue(tx, account, counted, clientAddress)))
			return { ok: false, code: 'locked' };
		return { ok: false, code: 'credentials' };
	});
	if (!result.ok && result.code === 'locked') kickOutbox(); // the Administrators' e-mail, if it locked now
	return result;
}
