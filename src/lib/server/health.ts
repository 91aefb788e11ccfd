import { sql } from 'drizzle-orm';
import { db, type Database } from './db/index';

export type Health = { status: 'ok' | 'down'; db: string };

/** Asks the database for one row, within a time limit. "ok", or what is wrong in a few words. */
export async function checkDatabase(database: Database = db(), timeoutMs = 3000): Promise<string> {
	let timer: ReturnType<typeof setTimeout> | undefined;
	const timeout = new Promise<string>((resolve) => {
		timer = setTimeout(() => resolve(`no answer within ${timeoutMs} ms`), timeoutMs);
	});
	const query = database
		.execute(sql`select 1`)
		.then(() => 'ok')
		.catch((e: unknown) => describe(e));
	try {
		return await Promise.race([query, timeout]);
	} finally {
		clearTimeout(timer);
	}
}

/** A short reason without connection details: error code and the driver's first line. */
function describe(e: unknown) {
	// Drizzle wraps the driver's error ("Failed query: …"); the driver's own one says what is wrong.
	let error = e as { code?: string; message?: string; cause?: unknown };
	while (error.cause && typeof error.cause === 'object') error = error.cause as typeof error;
	const text = (error.message ?? 'unknown error').split('\n')[0]!.replace(/postgres:\/\/\S+/g, '…');
	return error.code ? `${error.code}: ${text}` : text;
}

export async function checkHealth(database?: Database): Promise<Health> {
	const answer = await checkDatabase(database);
	return { status: answer === 'ok' ? 'ok' : 'down', db: answer };
}
