// bench/auth: figures for sign-in (issue 2/10). Prints
//  1. argon2id time per hash and per verification at the parameters the app uses (target ≤ 60 ms);
//  2. sign-ins per second for 20 concurrent clients, each with its own account (so the
//     per-username and per-address limits never apply), against the built app (`node build`)
//     on a throwaway database, never the demo one.
// Run: npm run bench -- auth   (or node bench/auth.js). Needs a build (npm run build).
import { ensureDependencies } from '../scripts/ensure-deps.js';

ensureDependencies({ quiet: true });
const { tsImport } = await import('tsx/esm/api');
const { performance } = await import('node:perf_hooks');
const { randomBytes } = await import('node:crypto');
const { localUrl, root } = await import('../scripts/lib/local.js');
const { throwawayDatabase } = await import('../scripts/lib/database.js');
const { buildIfStale } = await import('../scripts/lib/app.js');
const { default: postgres } = await import('postgres');
const { spawn } = await import('node:child_process');
const { join } = await import('node:path');
const os = await import('node:os');

/** @type {typeof import('../src/lib/server/auth/passwords.ts')} */
const passwords = await tsImport('../src/lib/server/auth/passwords.ts', import.meta.url);

const pct = (/** @type {number[]} */ xs, /** @type {number} */ p) => {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))] ?? Number.NaN;
};
const ms = (/** @type {number} */ x) => `${x.toFixed(1)} ms`;

console.log(`bench/auth on ${os.cpus().length} cores, Node ${process.version}`);
console.log(
	`argon2id parameters: m=${passwords.hashOptions.memoryCost} KiB, t=${passwords.hashOptions.timeCost}, p=${passwords.hashOptions.parallelism}`
);

// 1. Hash and verify, one at a time.
await passwords.hashPassword('warm-up passphrase for argon2');
const hashTimes = [];
let hash = '';
for (let i = 0; i < 30; i++) {
	const t0 = performance.now();
	hash = await passwords.hashPassword(`bench passphrase number ${i}`);
	hashTimes.push(performance.now() - t0);
}
const verifyTimes = [];
for (let i = 0; i < 30; i++) {
	const t0 = performance.now();
	await passwords.verifyPassword(hash, 'bench passphrase number 29');
	verifyTimes.push(performance.now() - t0);
}
const mean = (/** @type {number[]} */ xs) => xs.reduce((a, b) => a + b, 0) / xs.length;
console.log(
	`hash:   mean ${ms(mean(hashTimes))}, p50 ${ms(pct(hashTimes, 50))}, p95 ${ms(pct(hashTimes, 95))} (30 runs; target ≤ 60 ms)`
);
console.log(
	`verify: mean ${ms(mean(verifyTimes))}, p50 ${ms(pct(verifyTimes, 50))}, p95 ${ms(pct(verifyTimes, 95))} (30 runs)`
);

// 2. Sign-ins per second through the built app.
buildIfStale();
const throwaway = await throwawayDatabase();
const dbName = throwaway.name;
const clients = 20;
const password = 'bench passphrase for every account';
const shared = await passwords.hashPassword(password);
const owner = postgres(localUrl('owner', dbName), { max: 1, onnotice: () => {} });
for (let i = 1; i <= clients; i++) {
	await owner`insert into accounts (username, full_name, email, roles, password_hash)
		values (${`bench${i}`}, ${`Bench Person ${i}`}, ${`bench${i}@example.org`}, ${['technician']}, ${shared})`;
}
await owner.end();

const port = 3190;
const origin = `http://127.0.0.1:${port}`;
const app = spawn(process.execPath, [join(root, 'build')], {
	env: {
		...process.env,
		NODE_ENV: 'production',
		DATABASE_URL: localUrl('app', dbName),
		HOST: '127.0.0.1',
		PORT: String(port),
		ORIGIN: origin,
		AUTH_SECRET: randomBytes(24).toString('hex'),
		// This measures how fast sign-ins go, not the limit on them (rate-limit.ts: 60 a minute per
		// address by default, and all 20 clients share 127.0.0.1).
		RATE_LIMIT_SIGN_IN_PER_ADDRESS: '1000000'
	},
	stdio: 'ignore'
});
for (let i = 0; ; i++) {
	try {
		if ((await fetch(`${origin}/api/v1/health`)).ok) break;
	} catch {
		/* not up yet */
	}
	if (i > 150) throw new Error('the app did not start');
	await new Promise((r) => setTimeout(r, 200));
}

const seconds = 10;
const until = performance.now() + seconds * 1000;
/** @type {number[]} */
const latencies = [];
let ok = 0;
let failed = 0;
await Promise.all(
	Array.from({ length: clients }, async (_, i) => {
		while (performance.now() < until) {
			const t0 = performance.now();
			const response = await fetch(`${origin}/auth/callback/credentials`, {
				method: 'POST',
				redirect: 'manual',
				headers: { origin, 'content-type': 'application/x-www-form-urlencoded' },
				body: new URLSearchParams({ username: `bench${i + 1}`, password, callbackUrl: '/' })
			});
			latencies.push(performance.now() - t0);
			const signedIn =
				response.status === 302 &&
				response.headers.getSetCookie().some((c) => c.startsWith('authjs.session-token='));
			if (signedIn) ok++;
			else failed++;
		}
	})
);
app.kill('SIGTERM');
await new Promise((r) => app.once('exit', r));
throwaway.drop();

console.log(
	`sign-ins: ${(ok / seconds).toFixed(1)} per second with ${clients} concurrent clients over ${seconds} s ` +
		`(${ok} signed in, ${failed} refused); latency p50 ${ms(pct(latencies, 50))}, p95 ${ms(pct(latencies, 95))}`
);
