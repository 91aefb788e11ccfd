// The local PostgreSQL 15 cluster under .data/pg: create, start, stop, and the roles and
// databases Countersign uses. Node built-ins only (psql and pg_ctl do the talking).
import { spawnSync } from 'node:child_process';
import {
	chmodSync,
	chownSync,
	existsSync,
	mkdirSync,
	readFileSync,
	rmSync,
	statSync,
	writeFileSync
} from 'node:fs';
import { dirname, join } from 'node:path';
import { dataDir, fail, localSecrets, pg, say } from './local.js';
import { ensureDebianPackages, isRoot } from './system.js';

const tool = (/** @type {string} */ name) => join(pg.bin, name);

/** PostgreSQL's user and group ids, when we are root and must hand folders over. */
function postgresIds() {
	const out = spawnSync('id', ['-u', 'postgres']).stdout?.toString().trim();
	const group = spawnSync('id', ['-g', 'postgres']).stdout?.toString().trim();
	if (!out || !group)
		fail('the postgres system user is missing (it comes with the postgresql package).');
	return { uid: Number(out), gid: Number(group) };
}

/**
 * Runs a PostgreSQL server program, as the postgres user when we are root (initdb and
 * postgres refuse to run as root). `ownSession` starts it in a session of its own, so that
 * Ctrl-C in our terminal reaches the app first and we stop the database after it, in order.
 * @param {string} program @param {string[]} args @param {{ ownSession?: boolean }} [options]
 */
function asPostgres(program, args, { ownSession = false } = {}) {
	let argv = isRoot
		? ['runuser', '-u', 'postgres', '--', tool(program), ...args]
		: [tool(program), ...args];
	if (ownSession) argv = ['setsid', ...argv];
	const [cmd, ...rest] = argv;
	return spawnSync(/** @type {string} */ (cmd), rest, {
		stdio: ['ignore', 'pipe', 'pipe'],
		cwd: '/'
	});
}

/** The postgres user must be able to walk down to .data: add search (x) permission where missing. */
function makeTraversable(/** @type {string} */ dir) {
	for (let d = dirname(dir); d !== dirname(d); d = dirname(d)) {
		const mode = statSync(d).mode;
		if ((mode & 0o001) === 0) {
			chmodSync(d, mode | 0o001);
			say(`made ${d} traversable for the postgres user (added o+x)`);
		}
	}
}

export function ensurePostgresInstalled() {
	ensureDebianPackages([
		{ name: 'postgresql-15', marker: tool('initdb'), why: 'PostgreSQL 15 server' }
	]);
}

/** Creates the cluster on first use. @returns {boolean} whether it was created now */
export function ensureCluster() {
	ensurePostgresInstalled();
	if (existsSync(join(pg.cluster, 'PG_VERSION'))) return false;
	say(`creating a PostgreSQL cluster in ${pg.cluster}`);
	mkdirSync(dataDir, { recursive: true, mode: 0o755 });
	chmodSync(dataDir, 0o755);
	const secrets = localSecrets();
	const pwfile = join(dataDir, '.superuser-password');
	mkdirSync(pg.cluster, { recursive: true, mode: 0o700 });
	mkdirSync(dirname(pg.log), { recursive: true, mode: 0o755 });
	writeFileSync(pwfile, secrets.superuser + '\n', { mode: 0o600 });
	if (isRoot) {
		makeTraversable(dataDir);
		const { uid, gid } = postgresIds();
		for (const p of [pg.cluster, dirname(pg.log), pwfile]) chownSync(p, uid, gid);
	}
	const result = asPostgres('initdb', [
		'-D',
		pg.cluster,
		'-U',
		'postgres',
		'--auth-local=trust',
		'--auth-host=scram-sha-256',
		`--pwfile=${pwfile}`,
		'-E',
		'UTF8',
		'--locale=C.UTF-8'
	]);
	rmSync(pwfile, { force: true });
	if (result.status !== 0) {
		rmSync(pg.cluster, { recursive: true, force: true });
		fail(`initdb failed:\n${result.stderr?.toString()}`);
	}
	return true;
}

export function clusterRunning() {
	return (
		existsSync(join(pg.cluster, 'PG_VERSION')) &&
		asPostgres('pg_ctl', ['status', '-D', pg.cluster]).status === 0
	);
}

/** Starts the cluster unless it already runs. @returns {boolean} whether this call started it */
export function startCluster() {
	if (clusterRunning()) {
		say(`PostgreSQL already running on ${pg.host}:${pg.port} (reused)`);
		return false;
	}
	// Loopback TCP only; no Unix socket, so path lengths and socket permissions never matter.
	const options = `-c listen_addresses=${pg.host} -c port=${pg.port} -c unix_socket_directories='' -c timezone=UTC -c log_timezone=UTC`;
	const result = asPostgres(
		'pg_ctl',
		['-D', pg.cluster, '-l', pg.log, '-w', '-t', '60', '-o', options, 'start'],
		{
			ownSession: true
		}
	);
	if (result.status !== 0) {
		const log = existsSync(pg.log) ? readFileSync(pg.log, 'utf8').slice(-2000) : '';
		if (log.includes('Address already in use')) {
			fail(
				`port ${pg.port} on ${pg.host} is taken by another server: stop it, or set COUNTERSIGN_PG_PORT to a free port.`
			);
		}
		fail(`PostgreSQL did not start (log: ${pg.log}):\n${result.stdout}${result.stderr}`);
	}
	say(`PostgreSQL started on ${pg.host}:${pg.port}`);
	return true;
}

export function stopCluster() {
	if (!clusterRunning()) return;
	const result = asPostgres('pg_ctl', ['-D', pg.cluster, '-m', 'fast', '-w', '-t', '60', 'stop']);
	if (result.status !== 0)
		console.error(`[setup] PostgreSQL did not stop cleanly:\n${result.stderr}`);
	else say('PostgreSQL stopped');
}

/**
 * Runs SQL as the superuser through psql over loopback TCP.
 * @param {string} sql @param {string} [database] @returns {string} psql's unaligned output
 */
export function superSql(sql, database = 'postgres') {
	const result = spawnSync(
		tool('psql'),
		[
			'-X',
			'-q',
			'-At',
			'-v',
			'ON_ERROR_STOP=1',
			'-h',
			pg.host,
			'-p',
			String(pg.port),
			'-U',
			'postgres',
			'-d',
			database,
			'-c',
			sql
		],
		{
			env: { ...process.env, PGPASSWORD: localSecrets().superuser, PGCONNECT_TIMEOUT: '10' },
			stdio: ['ignore', 'pipe', 'pipe']
		}
	);
	if (result.status !== 0)
		throw new Error(`psql failed: ${result.stderr.toString().trim()}\nSQL: ${sql}`);
	return result.stdout.toString().trim();
}

/** A quoted SQL literal for values we generated ourselves (role names, hex passwords). */
const literal = (/** @type {string} */ v) => `'${v.replaceAll("'", "''")}'`;
const ident = (/** @type {string} */ v) => `"${v.replaceAll('"', '""')}"`;

/** The owner role (migrations) and the application role, with the passwords of this data folder. */
export function ensureRoles() {
	const secrets = localSecrets();
	for (const { role, password, extra } of [
		{ role: pg.ownerRole, password: secrets.owner, extra: 'CREATEDB' },
		{ role: pg.appRole, password: secrets.app, extra: 'NOCREATEDB' }
	]) {
		const exists = superSql(`SELECT 1 FROM pg_roles WHERE rolname = ${literal(role)}`) === '1';
		const verb = exists ? 'ALTER' : 'CREATE';
		superSql(
			`${verb} ROLE ${ident(role)} LOGIN ${extra} NOSUPERUSER NOCREATEROLE PASSWORD ${literal(password)}`
		);
	}
}

export function databaseExists(/** @type {string} */ name) {
	return superSql(`SELECT 1 FROM pg_database WHERE datname = ${literal(name)}`) === '1';
}

/**
 * Creates a database owned by the owner role, closed to everyone but the two roles. The public
 * schema belongs to the owner; the app role may use it (table rights come from migrations).
 * With a template, the copy keeps the template's schema, data and rights inside it.
 * @param {string} name @param {{ template?: string }} [options]
 */
export function createDatabase(name, { template } = {}) {
	const from = template ? ` TEMPLATE ${ident(template)}` : '';
	superSql(`CREATE DATABASE ${ident(name)} OWNER ${ident(pg.ownerRole)}${from}`);
	// Database-level rights are not copied from a template; everything inside it is.
	superSql(
		`REVOKE ALL ON DATABASE ${ident(name)} FROM PUBLIC; GRANT CONNECT, TEMPORARY ON DATABASE ${ident(name)} TO ${ident(pg.appRole)}`
	);
	if (template) return;
	superSql(
		`ALTER SCHEMA public OWNER TO ${ident(pg.ownerRole)}; REVOKE ALL ON SCHEMA public FROM PUBLIC; GRANT USAGE ON SCHEMA public TO ${ident(pg.appRole)}`,
		name
	);
}

/** Names of the databases whose names start with the prefix. */
export function listDatabases(/** @type {string} */ prefix) {
	const out = superSql(
		`SELECT datname FROM pg_database WHERE starts_with(datname, ${literal(prefix)}) ORDER BY 1`
	);
	return out ? out.split('\n') : [];
}

export function dropDatabase(/** @type {string} */ name) {
	superSql(`DROP DATABASE IF EXISTS ${ident(name)} WITH (FORCE)`);
}
