// Where the local stand-ins keep their state, and the settings shared by npm start, npm test,
// npm run dev and the db scripts. Node built-ins only.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = fileURLToPath(new URL('../..', import.meta.url));

/** Everything the local setup writes lives here (git-ignored). */
export const dataDir = resolve(root, process.env.COUNTERSIGN_DATA_DIR ?? '.data');

export const pg = {
	host: '127.0.0.1',
	port: Number(process.env.COUNTERSIGN_PG_PORT ?? 54329),
	bin: process.env.COUNTERSIGN_PG_BIN ?? '/usr/lib/postgresql/15/bin',
	cluster: join(dataDir, 'pg'),
	log: join(dataDir, 'log', 'postgres.log'),
	/** The database that npm start serves. */
	database: 'countersign',
	/** Owns the schema and runs migrations. */
	ownerRole: 'countersign_owner',
	/** The role the app connects as: only the privileges the migrations grant it. */
	appRole: 'countersign_app'
};

/**
 * Passwords for the local cluster's roles and the app's session secret, made once per data
 * folder and kept in .data/secrets.json (mode 600). Production passes its own through the
 * environment instead.
 * @returns {{ superuser: string, owner: string, app: string, authSecret: string }}
 */
export function localSecrets() {
	const file = join(dataDir, 'secrets.json');
	if (existsSync(file)) return JSON.parse(readFileSync(file, 'utf8'));
	mkdirSync(dataDir, { recursive: true, mode: 0o755 });
	const make = () => randomBytes(24).toString('hex');
	const secrets = { superuser: make(), owner: make(), app: make(), authSecret: make() };
	writeFileSync(file, JSON.stringify(secrets, null, 2) + '\n', { mode: 0o600 });
	return secrets;
}

/**
 * @param {'superuser' | 'owner' | 'app'} who
 * @param {string} database
 */
export function localUrl(who, database = pg.database) {
	const secrets = localSecrets();
	const user = { superuser: 'postgres', owner: pg.ownerRole, app: pg.appRole }[who];
	return `postgres://${user}:${secrets[who]}@${pg.host}:${pg.port}/${database}`;
}

/** @param {string} message */
export function say(message) {
	// stderr: setup talk never mixes with what a command prints on stdout (db:psql, audit:verify).
	console.error(`[setup] ${message}`);
}

/** @param {string} message @returns {never} */
export function fail(message) {
	console.error(`[setup] ${message}`);
	process.exit(1);
}
