import { sql } from 'drizzle-orm';
import { db, type Database } from './db/index';
import { checkMail } from './mail';
import { checkStorage } from './storage';

export type Health = { status: 'ok' | 'down'; db: string; storage: string; mail: string };

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

/** Every part the app needs: the database, the object store (evidence, PDFs) and the mail server. */
export async function checkHealth(database?: Database): Promise<Health> {
	const [answer, storage, mail] = await Promise.all([
		checkDatabase(database),
		checkStorage().catch((e: unknown) => describeSetup(e)),
		checkMail().catch((e: unknown) => describeSetup(e))
	]);
	const ok = answer === 'ok' && storage === 'ok' && mail === 'ok';
	return { status: ok ? 'ok' : 'down', db: answer, storage, mail };
}

/** A setting that is missing says which (never a value). */
const describeSetup = (e: unknown) => (e instanceof Error ? e.message : 'not configured');
