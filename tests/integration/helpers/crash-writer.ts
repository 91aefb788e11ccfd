// Opens a transaction that writes a record row and its audit event, says "ready", and waits to
// be killed: the parent test kills this process mid-transaction (SE11: no partial rows).
import { sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { recordEvent } from '../../../src/lib/server/audit/index';
import * as schema from '../../../src/lib/server/db/schema/index';

const client = postgres(process.argv[2]!, { max: 1, onnotice: () => {} });
const db = drizzle(client, { schema });
await db.transaction(async (tx) => {
	await tx.execute(
		sql`insert into sites (code, name, time_zone) values ('CRASH', 'Never committed', 'UTC')`
	);
	await recordEvent(tx, {
		actor: { kind: 'system', name: 'crash test' },
		action: 'test.crash',
		entityType: 'site'
	});
	process.stdout.write('ready\n');
	await new Promise(() => {}); // wait for SIGKILL
});
