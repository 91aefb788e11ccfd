// Installs the npm dependencies when they are missing or older than package-lock.json.
// Node built-ins only: this runs before anything from node_modules can be imported.
import { createHash } from 'node:crypto';
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const stampFile = join(root, 'node_modules', '.countersign-deps');

function lockDigest() {
	const hash = createHash('sha256');
	for (const name of ['package.json', 'package-lock.json']) {
		const file = join(root, name);
		if (existsSync(file)) hash.update(readFileSync(file));
	}
	return hash.digest('hex');
}

/** Runs `npm ci` (or `npm install` without a lockfile) unless node_modules matches the lockfile. */
export function ensureDependencies({ quiet = false } = {}) {
	const digest = lockDigest();
	if (existsSync(stampFile) && readFileSync(stampFile, 'utf8').trim() === digest) return false;
	const hasLock = existsSync(join(root, 'package-lock.json'));
	const args = hasLock ? ['ci', '--no-audit', '--no-fund'] : ['install', '--no-audit', '--no-fund'];
	if (!quiet) console.log(`[setup] installing dependencies: npm ${args.join(' ')}`);
	const started = Date.now();
	const result = spawnSync('npm', args, {
		cwd: root,
		stdio: quiet ? ['ignore', 'ignore', 'inherit'] : 'inherit',
		// Browsers come from Debian (chromium), never from a download at install time.
		env: { ...process.env, PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD: '1' }
	});
	if (result.status !== 0) {
		console.error('[setup] npm could not install the dependencies (see above).');
		process.exit(result.status ?? 1);
	}
	writeFileSync(stampFile, digest + '\n');
	if (!quiet)
		console.log(
			`[setup] dependencies installed in ${((Date.now() - started) / 1000).toFixed(1)} s`
		);
	return true;
}

if (import.meta.url === `file://${process.argv[1]}`) ensureDependencies();
