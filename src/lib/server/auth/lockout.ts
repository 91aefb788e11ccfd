import { eq, sql } from 'drizzle-orm';
import { recordEvent } from '../audit/index';
import type { Transaction } from '../db/index';
import { accounts } from '../db/schema/index';
import { log } from '../log';
import { notifyLocked } from '../notify';
import { authSettings } from './settings';

/**
 * One more failed password for an account — at sign-in or at an electronic signature (ES4, ES7,
 * SE5). Returns the consecutive count. Record the failure's own event, then call lockIfDue.
 */
export async function countFailedPassword(tx: Transaction, accountId: string) {
	const [updated] = await tx
		.update(accounts)
		.set({ failedSignIns: sql`${accounts.failedSignIns} + 1` })
		.where(eq(accounts.id, accountId))
		.returning({ failures: accounts.failedSignIns, lockedAt: accounts.lockedAt });
	return { failures: updated!.failures, alreadyLocked: Boolean(updated!.lockedAt) };
}

/** Locks the account when the count has reached the limit, recording the lockout. Returns whether it locked now. */
export async function lockIfDue(
	tx: Transaction,
	account: { id: string; username: string },
	count: { failures: number; alreadyLocked: boolean },
	clientAddress: string | null
) {
	if (count.alreadyLocked || count.failures < authSettings().AUTH_LOCKOUT_FAILURES) return false;
	await tx
		.update(accounts)
		.set({ lockedAt: sql`now()` })
		.where(eq(accounts.id, account.id));
	const event = await recordEvent(tx, {
		actor: { kind: 'system', name: 'system: sign-in guard' },
		action: 'auth.lockout',
		entityType: 'account',
		entityId: account.id,
		newValues: { username: account.username, consecutiveFailures: count.failures, locked: true },
		previousValues: { locked: false },
		reason: `${count.failures} consecutive failed passwords (sign-in or signing)`,
		clientAddress
	});
	// The Administrators are told by e-mail (sent from the outbox once this commits; the caller kicks it).
	await notifyLocked(tx, account, count.failures, event.seq);
	log.warn('account locked after failed passwords', {
		accountId: account.id,
		username: account.username,
		failures: count.failures
	});
	return true;
}
