import { defineConfig, devices } from '@playwright/test';

// Browser tests run against the built app (`node build`) on its own database, which
// scripts/test.js prepares and passes in through the environment. The browser is Debian's
// Chromium: Playwright never downloads one here.
const port = Number(process.env.E2E_PORT ?? 3100);
const origin = `http://127.0.0.1:${port}`;

const launchOptions = {
	executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
	args: [
		'--no-sandbox',
		'--disable-gpu',
		'--disable-background-networking',
		'--disable-component-update',
		'--disable-sync',
		'--no-first-run',
		'--disable-quic'
	]
};

export default defineConfig({
	testDir: 'tests/e2e',
	testMatch: '**/*.e2e.ts',
	outputDir: 'test-results/e2e',
	fullyParallel: true,
	workers: 2,
	retries: 0,
	timeout: 60_000,
	reporter: [['list'], ['json', { outputFile: 'test-results/e2e-results.json' }]],
	use: {
		baseURL: origin,
		trace: 'retain-on-failure',
		screenshot: 'only-on-failure'
	},
	projects: [
		{
			name: 'chromium',
			testIgnore: '**/tamper.e2e.ts',
			use: { ...devices['Desktop Chrome'], launchOptions }
		},
		// Breaks the audit chain on purpose: runs alone, after every other browser test.
		{
			name: 'tamper',
			testMatch: '**/tamper.e2e.ts',
			dependencies: ['chromium'],
			use: { ...devices['Desktop Chrome'], launchOptions }
		}
	],
	webServer: {
		command: `node ${process.env.COUNTERSIGN_BUILD_DIR ?? 'build'}`,
		url: `${origin}/api/v1/health`,
		reuseExistingServer: false,
		timeout: 60_000,
		stdout: 'ignore',
		stderr: 'pipe',
		env: {
			DATABASE_URL: process.env.E2E_DATABASE_URL ?? '',
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: origin,
			AUTH_SECRET: process.env.E2E_AUTH_SECRET ?? 'e2e-only-secret-not-for-production',
			// The S3 and SMTP fakes of this test run (scripts/test.js starts them).
			...Object.fromEntries(
				[
					'S3_ENDPOINT',
					'S3_REGION',
					'S3_BUCKET',
					'S3_ACCESS_KEY_ID',
					'S3_SECRET_ACCESS_KEY',
					'S3_FORCE_PATH_STYLE',
					'S3_CREATE_BUCKET',
					'SMTP_URL',
					'MAIL_FROM',
					'AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED'
				].map((k) => [k, process.env[k] ?? ''])
			),
			// The lockout journey signs in wrongly five times in a row; the progressive delay is
			// tested against the database in tests/integration/sign-in.spec.ts.
			AUTH_DELAY_FREE_PER_USERNAME: '5',
			BODY_SIZE_LIMIT: '16M',
			// The outbox worker looks for work every second (5 s by default) besides after each commit.
			OUTBOX_INTERVAL_MS: '1000',
			AUTH_DELAY_FREE_PER_ADDRESS: '1000',
			// Browser tests sign in and sign faster than people (limits: src/lib/server/rate-limit.ts).
			RATE_LIMIT_SIGN_IN_PER_ADDRESS: '1000000',
			RATE_LIMIT_SIGNATURES_PER_PERSON: '1000000',
			RATE_LIMIT_API_PER_ADDRESS: '1000000',
			// The demo's PM schedules stay as seeded (no work orders made mid-run): the browser tests
			// see the due and overdue lists; the scheduler is tested in tests/integration/pm.spec.ts.
			PM_SCHEDULER: 'off'
		}
	}
});
