import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { root } from '../../../scripts/lib/local.js';

/** The built app (`node build`) on its own port against a test database; stopped with stop(). */
export async function serveBuiltApp(
	databaseUrl: string,
	port: number,
	extraEnv: Record<string, string> = {}
) {
	const origin = `http://127.0.0.1:${port}`;
	const child: ChildProcess = spawn(
		process.execPath,
		[join(root, process.env.COUNTERSIGN_BUILD_DIR ?? 'build')],
		{
			cwd: root,
			env: {
				...process.env,
				NODE_ENV: 'production',
				DATABASE_URL: databaseUrl,
				HOST: '127.0.0.1',
				PORT: String(port),
				ORIGIN: origin,
				AUTH_SECRET: 'integration-test-secret-0123456789abcdef',
				AUTH_DELAY_FREE_PER_ADDRESS: '1000',
				// Tests run the PM scheduler themselves (tests/integration/pm.spec.ts), when they mean to.
				PM_SCHEDULER: 'off',
				...extraEnv
			},
			stdio: ['ignore', 'ignore', 'pipe']
		}
	);
	let stderr = '';
	child.stderr!.on('data', (d) => (stderr += d));
	const deadline = Date.now() + 30_000;
	for (;;) {
		try {
			if ((await fetch(`${origin}/api/v1/health`)).ok) break;
		} catch {
			// not up yet
		}
		if (Date.now() > deadline || child.exitCode !== null)
			throw new Error(`the built app did not start:\n${stderr}`);
		await new Promise((r) => setTimeout(r, 200));
	}
	return {
		origin,
		stderr: () => stderr,
		stop: () =>
			new Promise<void>((resolve) => {
				child.once('exit', () => resolve());
				child.kill('SIGTERM');
			})
	};
}

/**
 * Signs in through Auth.js's own endpoint, as any HTTP client can (issue 2/10 item 1), and returns
 * the Cookie header for later requests.
 */
export async function signInOverHttp(origin: string, username: string, password: string) {
	const response = await fetch(`${origin}/auth/callback/credentials`, {
		method: 'POST',
		redirect: 'manual',
		headers: { origin, 'content-type': 'application/x-www-form-urlencoded' },
		body: new URLSearchParams({ username, password, callbackUrl: '/' })
	});
	const cookies = response.headers.getSetCookie().map((c) => c.split(';')[0]!);
	const session = cookies.find((c) => c.startsWith('authjs.session-token='));
	return {
		status: response.status,
		location: response.headers.get('location'),
		cookie: session ?? null
	};
}
