import { existsSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clusterRunning } from '../../scripts/lib/cluster.js';
import { root } from '../../scripts/lib/local.js';
import { freshDatabase, type TestDatabase } from './helpers/database';
import { start, stop, stopAll } from './helpers/start';

// DATABASE_URL pointing at an existing server skips the local cluster (issue 1/10, item 2):
// npm start migrates through MIGRATION_DATABASE_URL, seeds the empty database and serves,
// and on SIGTERM leaves that server alone.
const dataDir = join(root, '.data', 'external-test');
const appPort = 3198;
let t: TestDatabase;

beforeAll(async () => {
	rmSync(dataDir, { recursive: true, force: true });
	t = await freshDatabase();
});
afterAll(async () => {
	await stopAll();
	rmSync(dataDir, { recursive: true, force: true });
	await t?.drop();
});

describe('npm start with DATABASE_URL', () => {
	it('uses that server, creates no cluster of its own, and leaves the server running', async () => {
		const env: NodeJS.ProcessEnv = {
			...process.env,
			COUNTERSIGN_DATA_DIR: dataDir,
			DATABASE_URL: t.appUrl,
			MIGRATION_DATABASE_URL: t.ownerUrl,
			PORT: String(appPort)
		};
		delete env.ORIGIN;
		const run = await start(env, appPort);
		expect(run.output()).toContain('DATABASE_URL is set: using that server, no local cluster');
		expect(run.output()).toContain(
			'demo data seeded (1 site, 3 buildings, 9 areas, 6 accounts, 21 equipment, 5 instruments, 5 parts, 3 procedures, 5 qualifications added)'
		);
		expect(existsSync(join(dataDir, 'pg'))).toBe(false);

		const [site] = await t.appSql`select code from sites`;
		expect(site?.code).toBe('OST');

		expect(await stop(run)).toBe(0);
		expect(clusterRunning()).toBe(true);
		const [ping] = await t.appSql`select 1 as one`;
		expect(ping?.one).toBe(1);
	});
});
