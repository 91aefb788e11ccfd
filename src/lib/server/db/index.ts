import type { PgDatabase } from 'drizzle-orm/pg-core';
import { drizzle, type PostgresJsQueryResultHKT } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { env } from '$env/dynamic/private';
import * as schema from './schema/index';

export type Database = ReturnType<typeof createDatabase>;
/** A Drizzle transaction, or a database handle where a function may run in either. */
export type Transaction = PgDatabase<PostgresJsQueryResultHKT, typeof schema>;

/** A Drizzle client over a postgres.js pool. The app connects as the application role. */
export function createDatabase(url: string, options: { max?: number } = {}) {
	const client = postgres(url, {
		max: options.max ?? Number(env.DATABASE_POOL_SIZE ?? 10),
		connect_timeout: 10,
		idle_timeout: 60,
		// Notices are for people reading psql, not for the app's log.
		onnotice: () => {},
		connection: { application_name: 'countersign', TimeZone: 'UTC' }
	});
	return Object.assign(drizzle(client, { schema }), { client });
}

let database: Database | undefined;

/** The app's one pool, made on first use so that building the app needs no database. */
export function db(): Database {
	if (!database) {
		if (!env.DATABASE_URL) throw new Error('DATABASE_URL is not set');
		database = createDatabase(env.DATABASE_URL);
	}
	return database;
}

/** Closes the pool; adapter-node emits `sveltekit:shutdown` on SIGTERM and SIGINT. */
export async function closeDatabase() {
	const current = database;
	database = undefined;
	await current?.client.end({ timeout: 5 });
}
