import { randomBytes } from 'node:crypto';
import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { createDatabase, dropDatabase, databaseExists } from '../../../scripts/lib/cluster.js';
import { localUrl } from '../../../scripts/lib/local.js';
import * as schema from '../../../src/lib/server/db/schema/index';

/**
 * Every integration test file gets a database of its own, copied from the migrated template
 * that `npm test` prepares (records are append-only, so nothing can be cleaned out between
 * tests). Call in `beforeAll`, and `drop()` in `afterAll`.
 */
export async function freshDatabase() {
	const template = process.env.COUNTERSIGN_TEST_TEMPLATE ?? 'countersign_test_template';
	if (!databaseExists(template)) {
		throw new Error(`template database ${template} is missing: run the tests with npm test`);
	}
	const name = `countersign_test_f_${randomBytes(6).toString('hex')}`;
	createDatabase(name, { template });
	const options = { max: 4, onnotice: () => {} };
	const appSql = postgres(localUrl('app', name), options);
	const ownerSql = postgres(localUrl('owner', name), options);
	return {
		name,
		appUrl: localUrl('app', name),
		ownerUrl: localUrl('owner', name),
		/** The application role: what the running app may do. */
		appSql,
		/** The owner role: what migrations and the seed may do. */
		ownerSql,
		app: drizzle(appSql, { schema }),
		owner: drizzle(ownerSql, { schema }),
		async drop() {
			await Promise.all([appSql.end(), ownerSql.end()]);
			dropDatabase(name);
		}
	};
}

export type TestDatabase = Awaited<ReturnType<typeof freshDatabase>>;
