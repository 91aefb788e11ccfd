// npm run db:psql -- ARGS: psql as the database superuser on the npm start database. Every
// argument goes to psql; nothing is printed but psql's own output. The cluster must be running.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { dataDir, localSecrets, pg } from './lib/local.js';

if (!existsSync(join(dataDir, 'secrets.json'))) {
	console.error(`db:psql: no local database in ${dataDir}; run npm start first`);
	process.exit(2);
}

const psql = join(pg.bin, 'psql');
const result = spawnSync(
	psql,
	[
		'-h',
		pg.host,
		'-p',
		String(pg.port),
		'-U',
		'postgres',
		'-d',
		pg.database,
		...process.argv.slice(2)
	],
	{
		stdio: 'inherit',
		env: { ...process.env, PGPASSWORD: localSecrets().superuser }
	}
);
if (result.error) {
	console.error(`db:psql: could not run ${psql}: ${result.error.message}`);
	process.exit(2);
}
process.exit(result.status ?? 1);
