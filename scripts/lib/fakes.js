// Starting the local stand-ins of hosted services (fakes/): the S3 fake and the SMTP fake, each
// as a child process on loopback, for npm start (data under .data/) and npm test (a fresh folder
// and bucket per run, on ports of their own so a running npm start is not disturbed).
// Node built-ins only.
import { spawn } from 'node:child_process';
import { rmSync } from 'node:fs';
import { connect } from 'node:net';
import { join } from 'node:path';
import { dataDir, fail, root, say } from './local.js';

/** Whether something accepts TCP connections on 127.0.0.1:port. */
function listening(/** @type {number} */ port) {
	return new Promise((resolve) => {
		const socket = connect({ host: '127.0.0.1', port });
		socket.once('connect', () => {
			socket.destroy();
			resolve(true);
		});
		socket.once('error', () => resolve(false));
	});
}

async function waitFor(/** @type {number} */ port, /** @type {string} */ what, timeoutMs = 15_000) {
	const until = Date.now() + timeoutMs;
	while (Date.now() < until) {
		if (await listening(port)) return;
		await new Promise((r) => setTimeout(r, 100));
	}
	fail(`the ${what} did not start on 127.0.0.1:${port} within ${timeoutMs / 1000} s.`);
}

/**
 * @typedef {{ s3Port: number, smtpPort: number, folder: string, bucket: string, fresh: boolean }} FakeOptions
 */

/** The settings for npm start and for npm test. */
export const fakeSettings = {
	start: () => ({
		s3Port: Number(process.env.COUNTERSIGN_S3_PORT ?? 4569),
		smtpPort: Number(process.env.COUNTERSIGN_SMTP_PORT ?? 2525),
		folder: dataDir,
		bucket: 'countersign',
		fresh: false
	}),
	test: () => ({
		s3Port: Number(process.env.COUNTERSIGN_TEST_S3_PORT ?? 4579),
		smtpPort: Number(process.env.COUNTERSIGN_TEST_SMTP_PORT ?? 2535),
		folder: join(dataDir, 'test-fakes'),
		bucket: `countersign-test-${Date.now().toString(36)}`,
		fresh: true
	})
};

/**
 * Starts both fakes unless something already listens on their ports (a fake left by an earlier
 * run is used as it is). Returns the environment the app needs and a stop function.
 * @param {FakeOptions} o
 */
export async function startFakes(o) {
	const s3Folder = join(o.folder, 's3');
	const mailFolder = join(o.folder, 'mail');
	/** @type {import('node:child_process').ChildProcess[]} */
	const children = [];
	const launch = async (
		/** @type {string} */ script,
		/** @type {string[]} */ args,
		/** @type {number} */ port,
		/** @type {string} */ what
	) => {
		if (await listening(port)) {
			say(`${what}: already listening on 127.0.0.1:${port}, using it`);
			return;
		}
		const child = spawn(process.execPath, [join(root, 'fakes', script), ...args], {
			cwd: root,
			stdio: ['ignore', 'ignore', 'inherit']
		});
		children.push(child);
		await waitFor(port, what);
		say(`${what} started on 127.0.0.1:${port}`);
	};
	if (o.fresh && !(await listening(o.s3Port))) rmSync(s3Folder, { recursive: true, force: true });
	if (o.fresh) rmSync(mailFolder, { recursive: true, force: true });
	await launch(
		's3.js',
		['--port', String(o.s3Port), '--directory', s3Folder, '--bucket', o.bucket],
		o.s3Port,
		'S3 fake'
	);
	await launch(
		'smtp.js',
		['--port', String(o.smtpPort), '--directory', mailFolder],
		o.smtpPort,
		'SMTP fake'
	);
	const stop = () => {
		for (const child of children) if (child.exitCode === null) child.kill('SIGTERM');
	};
	// The fakes end with the command that started them, however it ends.
	process.on('exit', stop);
	return {
		mailFolder,
		env: {
			S3_ENDPOINT: `http://127.0.0.1:${o.s3Port}`,
			S3_REGION: 'us-east-1',
			S3_BUCKET: o.bucket,
			S3_ACCESS_KEY_ID: 'S3RVER',
			S3_SECRET_ACCESS_KEY: 'S3RVER',
			S3_FORCE_PATH_STYLE: 'true',
			SMTP_URL: `smtp://127.0.0.1:${o.smtpPort}`,
			MAIL_FROM: 'Countersign <countersign@ostmere.example>',
			COUNTERSIGN_MAIL_FOLDER: mailFolder,
			S3_CREATE_BUCKET: 'true',
			// The lockfile pins an SDK release that runs on Node 20 (STACK.md).
			AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: 'true'
		},
		stop
	};
}
