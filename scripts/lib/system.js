// Debian packages the local setup needs, installed with apt when missing and running as root.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { fail, say } from './local.js';

export const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

let aptUpdated = false;

/**
 * Installs the Debian packages whose marker file is missing: `apt-get update` once, then one
 * `apt-get install` for all of them.
 * @param {{ name: string, marker: string, why: string }[]} wanted
 */
export function ensureDebianPackages(wanted) {
	const missing = wanted.filter((p) => !existsSync(p.marker));
	if (missing.length === 0) return;
	const names = missing.map((p) => p.name);
	if (!isRoot) {
		fail(
			`missing Debian packages: ${names.join(', ')} (${missing.map((p) => p.why).join('; ')}).\n` +
				`[setup] install them with: sudo apt-get install -y ${names.join(' ')}`
		);
	}
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	if (!aptUpdated) {
		say('apt-get update');
		const update = spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
		if (update.status !== 0) fail('apt-get update failed (see above).');
		aptUpdated = true;
	}
	say(`apt-get install -y ${names.join(' ')}`);
	const started = Date.now();
	const install = spawnSync(
		'apt-get',
		['install', '-y', '-qq', '--no-install-recommends', ...names],
		{
			stdio: ['ignore', 'ignore', 'inherit'],
			env
		}
	);
	if (install.status !== 0) fail(`apt-get install ${names.join(' ')} failed (see above).`);
	say(`installed ${names.join(', ')} in ${((Date.now() - started) / 1000).toFixed(0)} s`);
}
