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
