// npm run dev: the same database setup as npm start, then Vite's dev server with hot reload on
// http://127.0.0.1:5173. Ctrl-C stops Vite, then the database if this command started it.
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { ensureDependencies } from './ensure-deps.js';

ensureDependencies();
const { prepareDatabase } = await import('./lib/database.js');
const { stopCluster } = await import('./lib/cluster.js');
const { localSecrets, root } = await import('./lib/local.js');
const { fakeSettings, startFakes } = await import('./lib/fakes.js');

const { appUrl, startedCluster } = await prepareDatabase();
const fakes =
	process.env.S3_ENDPOINT || process.env.SMTP_URL
		? { env: {}, stop() {} }
		: await startFakes(fakeSettings.start());
const vite = spawn(join(root, 'node_modules', '.bin', 'vite'), ['dev', ...process.argv.slice(2)], {
	cwd: root,
	stdio: 'inherit',
	env: {
		...process.env,
		...fakes.env,
		DATABASE_URL: appUrl,
		AUTH_SECRET: process.env.AUTH_SECRET ?? localSecrets().authSecret
	}
});
for (const signal of /** @type {const} */ (['SIGINT', 'SIGTERM'])) {
	process.on(signal, () => vite.exitCode === null && vite.kill('SIGTERM'));
}
vite.on('exit', (code) => {
	fakes.stop();
	if (startedCluster) stopCluster();
	process.exit(code ?? 0);
});
