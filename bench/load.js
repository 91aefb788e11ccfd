// bench/load: the built app under 50 signed-in people at once (issue 10/10 item 5). Prints, for
// the same offered load in one run:
//  - the bare route GET /api/v1/health/live (through every hook, no session, nothing read),
//  - the execution page (a step of a work order in progress, /work/<id>/steps/<key>),
//  - the queue API (GET /api/v1/queues, what "Waiting for me" polls),
// with p50/p95/p99 latency, throughput and the non-2xx count (autocannon), and each p95 as a
// multiple of the bare route's (target ≤ 2×). 50 technician accounts are made in a throwaway
// database seeded with the demo data, each signed in once; each connection is one person, each
// sending BENCH_LOAD_RATE requests a second (2 by default: a person who refreshes twice a second,
// far above what anyone does), for BENCH_LOAD_SECONDS (10) per route. The app runs with its
// default rate limits, which this load stays under (rate-limit.ts: 600 a minute per person,
// 30,000 per address). Run: npm run bench -- load (or node bench/load.js). Not a test.
import { ensureDependencies } from '../scripts/ensure-deps.js';

ensureDependencies({ quiet: true });
const { randomBytes } = await import('node:crypto');
const { spawn } = await import('node:child_process');
const { join } = await import('node:path');
const os = await import('node:os');
// @ts-expect-error -- autocannon ships no type declarations (its options are used as documented)
const { default: autocannon } = await import('autocannon');
const { default: postgres } = await import('postgres');
const { localUrl, root } = await import('../scripts/lib/local.js');
const { runSeed, throwawayDatabase } = await import('../scripts/lib/database.js');
const { buildIfStale } = await import('../scripts/lib/app.js');

const PEOPLE = 50;
const RATE = Number(process.env.BENCH_LOAD_RATE ?? 2);
const SECONDS = Number(process.env.BENCH_LOAD_SECONDS ?? 10);
const PASSWORD = 'lantern-harbour-orbit'; // the demo password (README): demo data only

console.log(
	`bench/load on ${os.cpus().length} cores, Node ${process.version}: ${PEOPLE} people, ${RATE} requests/s each, ${SECONDS} s per route`
);
buildIfStale();
const throwaway = await throwawayDatabase();
const ownerUrl = localUrl('owner', throwaway.name);
await runSeed(ownerUrl, localUrl('app', throwaway.name));
const owner = postgres(ownerUrl, { max: 1, onnotice: () => {} });
// 50 technicians with the demo technician's password hash (one argon2 hash for all).
for (let i = 1; i <= PEOPLE; i++)
	await owner`insert into accounts (username, full_name, email, roles, password_hash)
		select ${`load${i}`}, ${`Load Person ${i}`}, ${`load${i}@ostmere.example`}, array['technician'], password_hash
		from accounts where username = 'tech1'`;
// A step of the demo's work order in progress.
const [started] = await owner`select w.id from work_orders w
	join work_order_transitions t on t.work_order_id = w.id
	where t.kind = 'started'
	and not exists (select 1 from work_order_transitions x where x.work_order_id = w.id
		and x.kind in ('executed', 'released', 'cancelled'))
	order by w.number limit 1`;
await owner.end();
if (!started) throw new Error('the demo has no work order in progress');
const stepPath = `/work/${started.id}/steps/flow-check`;

const port = 3189;
const origin = `http://127.0.0.1:${port}`;
const app = spawn(process.execPath, [join(root, process.env.COUNTERSIGN_BUILD_DIR ?? 'build')], {
	env: {
		...process.env,
		NODE_ENV: 'production',
		DATABASE_URL: localUrl('app', throwaway.name),
		HOST: '127.0.0.1',
		PORT: String(port),
		ORIGIN: origin,
		AUTH_SECRET: randomBytes(24).toString('hex'),
		// No background work during the measurement.
		PM_SCHEDULER: 'off',
		OUTBOX_WORKER: 'off'
	},
	stdio: ['ignore', 'ignore', 'inherit']
});
const stopApp = async () => {
	if (app.exitCode !== null) return;
	app.kill('SIGTERM');
	await new Promise((r) => app.once('exit', r));
};
try {
	for (let i = 0; ; i++) {
		try {
			if ((await fetch(`${origin}/api/v1/health/live`)).ok) break;
		} catch {
			/* not up yet */
		}
		if (i > 150) throw new Error('the app did not start');
		await new Promise((r) => setTimeout(r, 200));
	}

	/** @type {string[]} */
	const cookies = [];
	for (let i = 1; i <= PEOPLE; i++) {
		const response = await fetch(`${origin}/auth/callback/credentials`, {
			method: 'POST',
			redirect: 'manual',
			headers: { origin, 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ username: `load${i}`, password: PASSWORD, callbackUrl: '/' })
		});
		const cookie = response.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.find((c) => c?.startsWith('authjs.session-token='));
		if (!cookie) throw new Error(`load${i} could not sign in (${response.status})`);
		cookies.push(cookie);
	}
	const check = await fetch(`${origin}${stepPath}`, { headers: { cookie: cookies[0] ?? '' } });
	if (check.status !== 200) throw new Error(`the execution page answered ${check.status}`);

	/**
	 * One route under the load: one connection per person, each with its own session.
	 * @param {string} path
	 * @param {boolean} signedIn
	 */
	const measure = (path, signedIn) =>
		new Promise((resolve, reject) => {
			let next = 0;
			/** @type {number[]} */
			const latencies = [];
			const instance = autocannon(
				{
					url: `${origin}${path}`,
					connections: PEOPLE,
					connectionRate: RATE,
					duration: SECONDS,
					requests: [
						{
							method: 'GET',
							// Each connection (one person) keeps the cookie it was given first.
							setupRequest: (
								/** @type {any} */ request,
								/** @type {{ cookie?: string }} */ context
							) => {
								if (!signedIn) return request;
								context.cookie ??= cookies[next++ % cookies.length];
								return {
									...request,
									headers: { ...request.headers, cookie: context.cookie }
								};
							}
						}
					]
				},
				(/** @type {Error | null} */ error, /** @type {any} */ result) =>
					error ? reject(error) : resolve({ ...result, latencies })
			);
			// Every response's time, for exact percentiles (autocannon's own table has no p95).
			instance.on(
				'response',
				(
					/** @type {unknown} */ _client,
					/** @type {number} */ _status,
					/** @type {number} */ _bytes,
					/** @type {number} */ ms
				) => latencies.push(ms)
			);
		});

	/** @type {[string, string, boolean][]} */
	const routes = [
		['bare route', '/api/v1/health/live', false],
		['execution page', stepPath, true],
		['queue API', '/api/v1/queues', true]
	];
	/** @type {{ name: string, p50: number, p95: number, p99: number, rps: number, requests: number, non2xx: number, errors: number }[]} */
	const rows = [];
	for (const [name, path, signedIn] of routes) {
		await measure(path, signedIn); // warm-up round, not counted
		const r = /** @type {any} */ (await measure(path, signedIn));
		rows.push({
			name,
			p50: percentile(r.latencies, 50),
			p95: percentile(r.latencies, 95),
			p99: percentile(r.latencies, 99),
			rps: r.requests.average,
			requests: r.requests.total,
			non2xx: r.non2xx,
			errors: r.errors + r.timeouts
		});
	}
	const bare = rows[0]?.p95 ?? Number.NaN;
	console.log(
		'\nroute            p50 ms   p95 ms   p99 ms   req/s   requests   non-2xx   errors   p95 ÷ bare'
	);
	for (const r of rows)
		console.log(
			`${r.name.padEnd(15)} ${fmt(r.p50, 8)} ${fmt(r.p95, 8)} ${fmt(r.p99, 8)} ${fmt(r.rps, 7)} ${String(r.requests).padStart(10)} ${String(r.non2xx).padStart(9)} ${String(r.errors).padStart(8)} ${(r.p95 / bare).toFixed(1).padStart(11)}×`
		);
	console.log(
		`\ntarget: p95 ≤ 2× the bare route's. ${rows
			.slice(1)
			.map(
				(r) => `${r.name}: ${(r.p95 / bare).toFixed(1)}× (${r.p95 <= 2 * bare ? 'met' : 'not met'})`
			)
			.join('; ')}`
	);
	// Let the server finish what it still holds before it stops (its pool closes on shutdown).
	await new Promise((r) => setTimeout(r, 3000));
} finally {
	await stopApp();
	throwaway.drop();
}

/**
 * The nearest-rank percentile of the response times (ms).
 * @param {number[]} xs
 * @param {number} p
 */
function percentile(xs, p) {
	const sorted = [...xs].sort((a, b) => a - b);
	return sorted[Math.max(0, Math.ceil((p / 100) * sorted.length) - 1)] ?? Number.NaN;
}

/** @param {number} x @param {number} width */
function fmt(x, width) {
	return (Number.isFinite(x) ? x.toFixed(1) : '—').padStart(width);
}
