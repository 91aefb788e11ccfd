import { env } from '$env/dynamic/private';

/**
 * Rate limits (10/10; REQUIREMENTS SE5): how many requests a person, an API token or a client
 * address may make in a minute, per kind, before the server answers 429 with Retry-After. Counted
 * in this server's memory in fixed one-minute windows: with several servers each counts its own
 * (the sign-in failure delay, auth/throttle.ts, is kept in the database and shared). The numbers
 * are settings (README, "Settings"); the defaults leave room for the load benchmark's 50 signed-in
 * users (bench/load.js), for whom each person's and token's figure counts separately.
 */
export const rateLimitKinds = {
	/** Requests to /api/v1 per person (signed in), per minute. */
	api_person: { setting: 'RATE_LIMIT_API_PER_PERSON', default: 600 },
	/** Requests to /api/v1 per plant API token. */
	api_token: { setting: 'RATE_LIMIT_API_PER_TOKEN', default: 600 },
	/** Requests to /api/v1 per client address, whoever sends them. */
	api_address: { setting: 'RATE_LIMIT_API_PER_ADDRESS', default: 30000 },
	/** Sign-in attempts (right or wrong) per client address; failures also slow down (throttle.ts). */
	sign_in_address: { setting: 'RATE_LIMIT_SIGN_IN_PER_ADDRESS', default: 60 },
	/** Electronic signatures (each re-enters the password) per person. */
	sign_person: { setting: 'RATE_LIMIT_SIGNATURES_PER_PERSON', default: 30 }
} as const;
export type RateLimitKind = keyof typeof rateLimitKinds;

/** The limit of a kind per minute: its setting when it is a whole number from 1, else the default. */
export function limitOf(kind: RateLimitKind) {
	const { setting, default: fallback } = rateLimitKinds[kind];
	const v = Number(env[setting]);
	return Number.isInteger(v) && v >= 1 ? v : fallback;
}

const WINDOW_MS = 60_000;
type Window = { start: number; count: number };
const windows = new Map<string, Window>();
let sweepAt = 0;

export type RateLimitCheck =
	| { ok: true }
	/** `first`: the first refusal of this window (log it once, not each request). */
	| { ok: false; retryAfter: number; limit: number; first: boolean };

/**
 * Counts one request of `kind` for `key` (a person's or token's id, an address) and says whether
 * it is within the limit; when not, in how many whole seconds the window ends.
 */
export function hit(kind: RateLimitKind, key: string, now = Date.now()): RateLimitCheck {
	if (now >= sweepAt) {
		// Forget the windows that ended, so that the map stays as small as the last minute's keys.
		for (const [k, w] of windows) if (now - w.start >= WINDOW_MS) windows.delete(k);
		sweepAt = now + WINDOW_MS;
	}
	const id = `${kind}:${key}`;
	let w = windows.get(id);
	if (!w || now - w.start >= WINDOW_MS) {
		w = { start: now, count: 0 };
		windows.set(id, w);
	}
	w.count++;
	const limit = limitOf(kind);
	if (w.count <= limit) return { ok: true };
	return {
		ok: false,
		retryAfter: Math.max(1, Math.ceil((w.start + WINDOW_MS - now) / 1000)),
		limit,
		first: w.count === limit + 1
	};
}

/** The words of a 429: what was too much, and when to try again. */
export const tooManyWords = (what: string, retryAfter: number) =>
	`Too many ${what} in a minute: wait ${retryAfter} s, then try again.`;

/** For tests: forget every count. */
export function resetRateLimits() {
	windows.clear();
	sweepAt = 0;
}
