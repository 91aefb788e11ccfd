// Building and serving the SvelteKit app (adapter-node) for npm start and the browser tests.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fail, localSecrets, root, say } from './local.js';

/** build/ for npm start; npm test sets COUNTERSIGN_BUILD_DIR=build-test (see svelte.config.js). */
export const buildDir = join(root, process.env.COUNTERSIGN_BUILD_DIR ?? 'build');
const stamp = join(buildDir, '.built-from');
const inputs = [
	'src',
	'static',
	'svelte.config.js',
	'vite.config.ts',
	'tsconfig.json',
	'package-lock.json'
];

/** Newest modification time among the files a build reads. */
function newestInput() {
	let newest = 0;
	const visit = (/** @type {string} */ path) => {
		if (!existsSync(path)) return;
		const s = statSync(path);
		if (s.isDirectory()) for (const entry of readdirSync(path)) visit(join(path, entry));
		else newest = Math.max(newest, s.mtimeMs);
	};
	for (const input of inputs) visit(join(root, input));
	return newest;
}

/** Runs `vite build` unless the build folder is newer than every source file. */
export function buildIfStale() {
	if (existsSync(stamp) && statSync(stamp).mtimeMs >= newestInput()) {
		say('build is up to date');
		return;
	}
	say('building the app (vite build)');
	const started = Date.now();
	const result = spawnSync(
		join(root, 'node_modules', '.bin', 'vite'),
		['build', '--logLevel', 'warn'],
		{
			cwd: root,
			stdio: 'inherit'
		}
	);
	if (result.status !== 0) fail('vite build failed (see above).');
	writeFileSync(stamp, new Date().toISOString() + '\n');
	say(`built in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

/**
 * The environment the app server runs with. PORT, HOST and ORIGIN can be overridden.
 * @param {{ databaseUrl: string, port?: number }} options
 */
export function appEnvironment({ databaseUrl, port = Number(process.env.PORT ?? 3000) }) {
	const host = process.env.HOST ?? '127.0.0.1';
	return {
		...process.env,
		NODE_ENV: 'production',
		DATABASE_URL: databaseUrl,
		HOST: host,
		PORT: String(port),
		ORIGIN: process.env.ORIGIN ?? `http://${host}:${port}`,
		AUTH_SECRET: process.env.AUTH_SECRET ?? localSecrets().authSecret,
		// Photo uploads need up to 15 MB; hooks.server.ts keeps every other route at 1 MB.
		BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '16M'
	};
}

/** Starts `node build` as a child process with the given environment. */
export function serveApp(/** @type {NodeJS.ProcessEnv} */ env) {
	return spawn(process.execPath, [buildDir], { cwd: root, env, stdio: 'inherit' });
}
