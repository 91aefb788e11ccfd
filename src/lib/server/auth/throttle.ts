import { inArray, sql } from 'drizzle-orm';
import type { Transaction } from '../db/index';
import { signInThrottle } from '../db/schema/index';
import type { AuthSettings } from './settings';

/**
 * Progressive delay for sign-in guessing (ASVS 6.3.1; REQUIREMENTS SE5), kept in the database so
 * that every app server sees the same counts. Keyed on the username and on the client address;
 * each key answers a few failures at once, then asks the client to wait base·2ⁿ seconds (capped)
 * after its latest failure before the next try is even checked.
 */
export type ThrottleKey = { key: string; free: number };

export function throttleKeys(
	username: string,
	address: string,
	settings: AuthSettings
): ThrottleKey[] {
	return [
		{ key: `u:${username}`, free: settings.AUTH_DELAY_FREE_PER_USERNAME },
		{ key: `a:${address}`, free: settings.AUTH_DELAY_FREE_PER_ADDRESS }
	];
}

/** Seconds of delay after `failures` consecutive failures on a key that answers `free` at once. */
export function delayAfter(failures: number, free: number, settings: AuthSettings) {
	if (failures <= free) return 0;
	return Math.min(
		settings.AUTH_DELAY_BASE_SECONDS * 2 ** (failures - free - 1),
		settings.AUTH_DELAY_MAX_SECONDS
	);
}

/** Whole seconds the client must still wait before this attempt is checked (0: go ahead). */
export async function secondsToWait(tx: Transaction, keys: ThrottleKey[], settings: AuthSettings) {
	const rows = await tx
		.select({
			key: signInThrottle.key,
			failures: signInThrottle.failures,
			since: sql<number>`extract(epoch from (clock_timestamp() - ${signInThrottle.lastFailureAt}))::float8`
		})
		.from(signInThrottle)
		.where(
			inArray(
				signInThrottle.key,
				keys.map((k) => k.key)
			)
		);
	let wait = 0;
	for (const row of rows) {
		const free = keys.find((k) => k.key === row.key)!.free;
		if (row.since > settings.AUTH_DELAY_RESET_MINUTES * 60) continue; // forgotten
		const delay = delayAfter(row.failures, free, settings);
		if (delay > 0) wait = Math.max(wait, delay - Math.max(0, row.since));
	}
	return Math.ceil(Math.max(0, wait));
}

/** One more failure on each key; a key whose latest failure is older than the reset time starts again at 1. */
export async function recordFailure(tx: Transaction, keys: ThrottleKey[], settings: AuthSettings) {
	const stale = sql`${signInThrottle.lastFailureAt} < clock_timestamp() - make_interval(mins => ${settings.AUTH_DELAY_RESET_MINUTES})`;
	await tx
		.insert(signInThrottle)
		.values(keys.map((k) => ({ key: k.key, failures: 1 })))
		.onConflictDoUpdate({
			target: signInThrottle.key,
			set: {
				failures: sql`case when ${stale} then 1 else ${signInThrottle.failures} + 1 end`,
				lastFailureAt: sql`clock_timestamp()`
			}
		});
}

export async function clearFailures(tx: Transaction, keys: ThrottleKey[]) {
	await tx.delete(signInThrottle).where(
		inArray(
			signInThrottle.key,
			keys.map((k) => k.key)
		)
	);
}
