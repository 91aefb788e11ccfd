// Database lifecycle for npm start, npm run dev, npm test and the db scripts: the local cluster
// (or the server DATABASE_URL names), the roles, the database, migrations and the demo seed.
// Imported only after ensureDependencies(): it uses drizzle-orm, postgres and tsx.
import { drizzle } from 'drizzle-orm/postgres-js';
import { migrate } from 'drizzle-orm/postgres-js/migrator';
import { randomBytes } from 'node:crypto';
import { join } from 'node:path';
import postgres from 'postgres';
import { tsImport } from 'tsx/esm/api';
import {
	createDatabase,
	databaseExists,
	dropDatabase,
	ensureCluster,
	ensureRoles,
	startCluster,
	stopCluster
} from './cluster.js';
import { localUrl, pg, root, say } from './local.js';
import { registerKitAliases } from './register-kit-aliases.js';

/** @param {string} url */
function connect(url) {
	return postgres(url, { max: 1, onnotice: () => {}, connect_timeout: 10 });
}

/** Applies every migration in drizzle/ that the database has not seen, as the owner role. */
export async function runMigrations(/** @type {string} */ ownerUrl) {
	const sql = connect(ownerUrl);
	try {
		await migrate(drizzle(sql), { migrationsFolder: join(root, 'drizzle') });
	} finally {
		await sql.end();
	}
}

/**
 * Seeds the demo plant and the demo accounts as the owner, then the demo master data through
 * the app's own domain functions as the application role (each row with its audit event).
 * Idempotent.
 * @param {string} ownerUrl @param {string} appUrl
 */
export async function runSeed(ownerUrl, appUrl) {
	registerKitAliases();
	/** @type {typeof import('../../src/lib/server/db/seed.ts')} */
	const { seedDemoAccounts, seedDemoPlant, DEMO_PASSWORD } = await tsImport(
		'../../src/lib/server/db/seed.ts',
		import.meta.url
	);
	/** @type {typeof import('../../src/lib/server/db/schema/index.ts')} */
	const schema = await tsImport('../../src/lib/server/db/schema/index.ts', import.meta.url);
	const sql = connect(ownerUrl);
	let added;
	try {
		const database = drizzle(sql, { schema });
		const plant = await seedDemoPlant(database);
		added = { ...plant, accounts: await seedDemoAccounts(database) };
	} finally {
		await sql.end();
	}
	const previous = process.env.DATABASE_URL;
	process.env.DATABASE_URL = appUrl;
	// The seed signs a demo's worth of records in seconds: no signature rate limit for it (the
	// server's own limits are untouched: the setting is put back below).
	const previousLimit = process.env.RATE_LIMIT_SIGNATURES_PER_PERSON;
	process.env.RATE_LIMIT_SIGNATURES_PER_PERSON = '1000000';
	/** @type {typeof import('../../src/lib/server/db/demo/index.ts')} */
	const demo = await tsImport('../../src/lib/server/db/demo/index.ts', import.meta.url);
	try {
		const master = await demo.seedDemoMasterData(DEMO_PASSWORD);
		const work = await demo.seedDemoWork(DEMO_PASSWORD);
		return {
			...added,
			...master,
			work,
			...(await demo.seedDemoSchedules()),
			...(await demo.seedDemoPlantUsage()),
			...(await demo.seedDemoReliability())
		};
	} finally {
		// Through the same module copy as the seed (each tsImport loads its own copy, and pool).
		await demo.closeDatabase();
		if (previous === undefined) delete process.env.DATABASE_URL;
		else process.env.DATABASE_URL = previous;
		if (previousLimit === undefined) delete process.env.RATE_LIMIT_SIGNATURES_PER_PERSON;
		else process.env.RATE_LIMIT_SIGNATURES_PER_PERSON = previousLimit;
	}
}

/** True when the database holds no site yet. */
async function isEmpty(/** @type {string} */ ownerUrl) {
	const sql = connect(ownerUrl);
	try {
		const [row] = await sql`select count(*)::int as n from sites`;
		return row?.n === 0;
	} finally {
		await sql.end();
	}
}

/**
 * Makes a database ready: the local cluster running (unless DATABASE_URL points elsewhere),
 * the roles, the database, every migration, and the demo data when it is empty.
 * @param {{ database?: string, seed?: 'if-empty' | 'always' | 'never', external?: boolean }} [options]
 * @returns {Promise<{ appUrl: string, ownerUrl: string, startedCluster: boolean }>}
 */
export async function prepareDatabase({
	database = pg.database,
	seed = 'if-empty',
	external = Boolean(process.env.DATABASE_URL)
} = {}) {
	let appUrl, ownerUrl;
	let startedCluster = false;
	if (external) {
		appUrl = /** @type {string} */ (process.env.DATABASE_URL);
		ownerUrl = process.env.MIGRATION_DATABASE_URL ?? appUrl;
		say('DATABASE_URL is set: using that server, no local cluster');
	} else {
		const created = ensureCluster();
		startedCluster = startCluster();
		ensureRoles();
		if (!databaseExists(database)) {
			say(`creating database ${database}`);
			createDatabase(database);
		} else if (!created) {
			say(`database ${database} exists (reused)`);
		}
		appUrl = localUrl('app', database);
		ownerUrl = localUrl('owner', database);
	}
	await runMigrations(ownerUrl);
	say('migrations applied');
	if (seed === 'always' || (seed === 'if-empty' && (await isEmpty(ownerUrl)))) {
		const added = await runSeed(ownerUrl, appUrl);
		say(
			`demo data seeded (${added.sites} site, ${added.buildings} buildings, ${added.areas} areas, ${added.accounts} accounts, ` +
				`${added.equipment} equipment, ${added.instruments} instruments, ${added.parts} parts, ${added.procedures} procedures, ` +
				`${added.qualifications} qualifications added)`
		);
	}
	return { appUrl, ownerUrl, startedCluster };
}

/**
 * A migrated database of its own on the local cluster, for benchmarks (never the demo one);
 * `drop()` removes it and stops the cluster if this call started it.
 */
export async function throwawayDatabase(prefix = 'countersign_bench') {
	ensureCluster();
	const startedCluster = startCluster();
	ensureRoles();
	const name = `${prefix}_${randomBytes(4).toString('hex')}`;
	createDatabase(name);
	await runMigrations(localUrl('owner', name));
	return {
		name,
		drop() {
			dropDatabase(name);
			if (startedCluster) stopCluster();
		}
	};
}
