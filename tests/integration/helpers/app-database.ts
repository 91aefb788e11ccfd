import { env } from '$env/dynamic/private';
import { closeDatabase } from '../../../src/lib/server/db/index';
import { freshDatabase } from './database';

/**
 * A fresh database that the app's own server modules ($lib/server/…) use through db(): sets
 * DATABASE_URL (the application role) before their first query. One per test file. Under
 * Vitest, `$env/dynamic/private` is an object read once per worker, so settings are changed on
 * it (`setEnv`), not on process.env.
 */
export async function appDatabase() {
	const t = await freshDatabase();
	env.DATABASE_URL = t.appUrl;
	// Tests sign and call the API far faster than people: the rate limits (rate-limit.ts) stay out
	// of their way (vite.config.ts does the same for the apps they serve), except where a test
	// sets its own (tests/integration/rate-limits.spec.ts).
	for (const name of [
		'RATE_LIMIT_API_PER_PERSON',
		'RATE_LIMIT_API_PER_TOKEN',
		'RATE_LIMIT_API_PER_ADDRESS',
		'RATE_LIMIT_SIGN_IN_PER_ADDRESS',
		'RATE_LIMIT_SIGNATURES_PER_PERSON'
	])
		env[name] = '1000000';
	return {
		...t,
		async drop() {
			await closeDatabase();
			await t.drop();
		}
	};
}

/** Sets server settings for the modules under test (see appDatabase). */
export function setEnv(values: Record<string, string>) {
	Object.assign(env, values);
}
