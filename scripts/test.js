// npm test: the same setup as npm start, against separate test databases, then every check:
// svelte-check, lint, unit tests, integration tests (each file gets its own database, copied
// from a migrated template), and browser tests (Debian's Chromium) against the built app.
// Prints "N passed, N failed" at the end. `--only unit|integration|e2e|check|lint` runs one part.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { ensureDependencies } from './ensure-deps.js';

const started = Date.now();
const onlyAt = process.argv.indexOf('--only');
const only = onlyAt > 0 ? process.argv[onlyAt + 1] : undefined;
const parts = ['check', 'lint', 'unit', 'integration', 'e2e'];
if (only && !parts.includes(only)) {
	console.error(`usage: node scripts/test.js [--only ${parts.join('|')}]`);
	process.exit(2);
}
const wants = (/** @type {string} */ part) => !only || only === part;
// With --only, arguments after `--` go to that part's tool (vitest or playwright), e.g. a file filter.
const dashes = process.argv.indexOf('--');
const extra = only && dashes > 0 ? process.argv.slice(dashes + 1) : [];

ensureDependencies();
// Tests build and serve their own copy of the app: a running `npm start` keeps its build/.
process.env.COUNTERSIGN_BUILD_DIR ??= 'build-test';
const { root, localUrl, localSecrets, say } = await import('./lib/local.js');
const { ensureDebianPackages } = await import('./lib/system.js');
const cluster = await import('./lib/cluster.js');
const { runMigrations, runSeed } = await import('./lib/database.js');
const { buildIfStale } = await import('./lib/app.js');
const { fakeSettings, startFakes } = await import('./lib/fakes.js');

const TEMPLATE = 'countersign_test_template';
const E2E_DATABASE = 'countersign_test_e2e';
const results = join(root, 'test-results');
rmSync(results, { recursive: true, force: true });
mkdirSync(results, { recursive: true });

const needsDatabase = wants('integration') || wants('e2e');
ensureDebianPackages([
	...(needsDatabase
		? [
				{
					name: 'postgresql-15',
					marker: '/usr/lib/postgresql/15/bin/initdb',
					why: 'PostgreSQL 15 server'
				}
			]
		: []),
	...(wants('e2e')
		? [{ name: 'chromium', marker: '/usr/bin/chromium', why: 'browser tests' }]
		: []),
	...(needsDatabase
		? [{ name: 'poppler-utils', marker: '/usr/bin/pdftotext', why: 'checking PDF records' }]
		: [])
]);

let startedCluster = false;
if (needsDatabase) {
	cluster.ensureCluster();
	startedCluster = cluster.startCluster();
	cluster.ensureRoles();
	// Test databases are thrown away whole: records inside them are append-only.
	for (const name of cluster.listDatabases('countersign_test_')) cluster.dropDatabase(name);
	cluster.createDatabase(TEMPLATE);
	await runMigrations(localUrl('owner', TEMPLATE));
	say(`template database ${TEMPLATE} migrated`);
}
// The S3 and SMTP fakes on ports of their own, with a fresh bucket and mail folder for this run.
const fakes = needsDatabase ? await startFakes(fakeSettings.test()) : { env: {}, stop() {} };
const fakeEnv = { ...fakes.env, S3_CREATE_BUCKET: 'true' };

/** @type {{ part: string, passed: number, failed: number, ok: boolean, note?: string }[]} */
const outcomes = [];
const bin = (/** @type {string} */ name) => join(root, 'node_modules', '.bin', name);

/** @param {string} part @param {string} cmd @param {string[]} args @param {NodeJS.ProcessEnv} [env] */
function run(part, cmd, args, env = {}) {
	console.log(`\n== ${part}: ${[cmd.replace(root, ''), ...args].join(' ')}`);
	const t = Date.now();
	const result = spawnSync(cmd, args, {
		cwd: root,
		stdio: 'inherit',
		env: { ...process.env, ...env }
	});
	const seconds = ((Date.now() - t) / 1000).toFixed(1);
	console.log(`== ${part}: ${result.status === 0 ? 'ok' : 'FAILED'} in ${seconds} s`);
	return result.status === 0;
}

/** Vitest's JSON report: counts of passed and failed tests. */
function vitestCounts(/** @type {string} */ file) {
	if (!existsSync(file)) return { passed: 0, failed: 0 };
	const report = JSON.parse(readFileSync(file, 'utf8'));
	return {
		passed: report.numPassedTests ?? 0,
		failed: (report.numFailedTests ?? 0) + (report.numRuntimeErrorTestSuites ?? 0)
	};
}

if (wants('check')) {
	const ok =
		run('check', bin('svelte-kit'), ['sync']) &&
		run('check', bin('svelte-check'), [
			'--tsconfig',
			'./tsconfig.json',
			'--fail-on-warnings',
			'--output',
			'human'
		]);
	outcomes.push({ part: 'check', passed: ok ? 1 : 0, failed: ok ? 0 : 1, ok });
}
if (wants('lint')) {
	const ok =
		run('lint', bin('prettier'), ['--check', '--log-level', 'warn', '.']) &&
		run('lint', bin('eslint'), ['.']);
	outcomes.push({ part: 'lint', passed: ok ? 1 : 0, failed: ok ? 0 : 1, ok });
}

for (const project of ['unit', 'integration']) {
	if (!wants(project)) continue;
	if (project === 'integration') buildIfStale(); // the lifecycle test serves the built app
	const report = join(results, `${project}.json`);
	const ok = run(
		project,
		bin('vitest'),
		[
			'run',
			'--project',
			project,
			'--reporter=default',
			'--reporter=json',
			`--outputFile.json=${report}`,
			...extra
		],
		{
			COUNTERSIGN_TEST_TEMPLATE: TEMPLATE,
			...fakeEnv
		}
	);
	const counts = vitestCounts(report);
	outcomes.push({ part: project, ...counts, ok: ok && counts.failed === 0 });
}

if (wants('e2e')) {
	buildIfStale();
	// The browser tests read the SMTP fake's messages: not those the integration tests' work orders
	// (numbered like the browser tests' own, each in its database) sent before.
	const mailFolder = 'mailFolder' in fakes ? fakes.mailFolder : null;
	if (mailFolder && existsSync(mailFolder))
		for (const f of readdirSync(mailFolder))
			if (f.endsWith('.eml')) rmSync(join(mailFolder, f), { force: true });
	cluster.createDatabase(E2E_DATABASE, { template: TEMPLATE });
	await runSeed(localUrl('owner', E2E_DATABASE), localUrl('app', E2E_DATABASE));
	const report = join(results, 'e2e-results.json');
	const ok = run('e2e', bin('playwright'), ['test', ...extra], {
		PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD: '1',
		E2E_DATABASE_URL: localUrl('app', E2E_DATABASE),
		E2E_OWNER_DATABASE_URL: localUrl('owner', E2E_DATABASE),
		// tests/e2e/tamper.e2e.ts changes an event past the append-only trigger, as an intruder could.
		E2E_SUPERUSER_DATABASE_URL: localUrl('superuser', E2E_DATABASE),
		E2E_AUTH_SECRET: localSecrets().authSecret,
		...fakeEnv
	});
	const stats = existsSync(report) ? JSON.parse(readFileSync(report, 'utf8')).stats : {};
	const passed = stats.expected ?? 0;
	let failed = (stats.unexpected ?? 0) + (stats.flaky ?? 0);
	if (!ok && failed === 0) failed = 1; // the run itself failed (web server, config)
	outcomes.push({ part: 'e2e', passed, failed, ok: ok && failed === 0 });
}

fakes.stop();
if (startedCluster) cluster.stopCluster();

const passed = outcomes.reduce((n, o) => n + o.passed, 0);
const failed = outcomes.reduce((n, o) => n + o.failed, 0);
const minutes = ((Date.now() - started) / 60000).toFixed(1);
console.log(`\n== Summary (${minutes} min)`);
for (const o of outcomes)
	console.log(
		`   ${o.ok ? 'ok    ' : 'FAILED'} ${o.part.padEnd(12)} ${o.passed} passed, ${o.failed} failed`
	);
console.log(`${passed} passed, ${failed} failed`);
process.exit(outcomes.every((o) => o.ok) ? 0 : 1);
