import { spawn, type ChildProcess } from 'node:child_process';
import { createConnection } from 'node:net';
import { root } from '../../../scripts/lib/local.js';

export type Started = { child: ChildProcess; output: () => string };

const running = new Set<ChildProcess>();
/** Stops whatever a failed test left running (SIGTERM: the app, then its database). */
export async function stopAll() {
	await Promise.all(
		[...running].map(
			(child) =>
				new Promise((resolve) =>
					child.exitCode !== null
						? resolve(null)
						: (child.once('exit', resolve), child.kill('SIGTERM'))
				)
		)
	);
}

/** Runs `npm start` (scripts/start.js) with the environment given; resolves once health is 200. */
export function start(env: NodeJS.ProcessEnv, appPort: number): Promise<Started> {
	const child = spawn(process.execPath, ['scripts/start.js'], {
		cwd: root,
		env,
		stdio: ['ignore', 'pipe', 'pipe']
	});
	running.add(child);
	child.once('exit', () => running.delete(child));
	let output = '';
	child.stdout!.on('data', (d) => (output += d));
	child.stderr!.on('data', (d) => (output += d));
	return new Promise((resolve, reject) => {
		const fail = (why: string) => {
			clearInterval(poll);
			clearTimeout(timer);
			reject(new Error(`${why}:\n${output}`));
		};
		const timer = setTimeout(() => fail('npm start did not come up in 90 s'), 90_000);
		child.on('exit', (code) => fail(`npm start exited early (${code})`));
		const poll = setInterval(async () => {
			try {
				const response = await fetch(`http://127.0.0.1:${appPort}/api/v1/health`);
				if (response.status === 200) {
					clearInterval(poll);
					clearTimeout(timer);
					resolve({ child, output: () => output });
				}
			} catch {
				// not listening yet
			}
		}, 250);
	});
}

/** Sends SIGTERM and resolves with the exit code. */
export function stop({ child }: Started): Promise<number | null> {
	return new Promise((resolve) => {
		child.removeAllListeners('exit');
		child.on('exit', (code) => resolve(code));
		child.kill('SIGTERM');
	});
}

export const listening = (port: number) =>
	new Promise<boolean>((resolve) => {
		const socket = createConnection({ host: '127.0.0.1', port });
		socket.once('connect', () => (socket.destroy(), resolve(true)));
		socket.once('error', () => resolve(false));
	});
