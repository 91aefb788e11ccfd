// npm start: everything from a fresh machine to the running app with demo data.
// Dependencies → PostgreSQL (local cluster under .data/, or DATABASE_URL) → roles and database
// → migrations → demo seed when empty → the S3 and SMTP fakes (fakes/, unless S3_ENDPOINT and
// SMTP_URL point elsewhere) → build → `node build`. Ctrl-C or SIGTERM stops the app, the fakes,
// then the database, cleanly.
import { ensureDependencies } from './ensure-deps.js';

ensureDependencies();

const { prepareDatabase } = await import('./lib/database.js');
const { stopCluster } = await import('./lib/cluster.js');
const { appEnvironment, buildIfStale, serveApp } = await import('./lib/app.js');
const { say } = await import('./lib/local.js');
const { fakeSettings, startFakes } = await import('./lib/fakes.js');

const { appUrl, startedCluster } = await prepareDatabase();
// The local stand-ins of S3 and SMTP, unless the environment names real ones.
const fakes =
	process.env.S3_ENDPOINT || process.env.SMTP_URL
		? { env: {}, stop() {} }
		: await startFakes(fakeSettings.start());
buildIfStale();

const env = { ...appEnvironment({ databaseUrl: appUrl }), ...fakes.env };
const app = serveApp(env);
say(`Countersign is serving on ${env.ORIGIN} (Ctrl-C stops it)`);

let stopping = false;
/** @param {number} code */
function shutdown(code) {
	fakes.stop();
	if (startedCluster) stopCluster();
	process.exit(code);
}

for (const signal of /** @type {const} */ (['SIGINT', 'SIGTERM', 'SIGHUP'])) {
	process.on(signal, () => {
		if (stopping) return;
		stopping = true;
		say(`${signal}: stopping the app`);
		// Ctrl-C reaches the app through the terminal's process group as well; a second
		// signal is harmless, and a SIGTERM sent to us alone must be passed on.
		if (app.exitCode === null) app.kill('SIGTERM');
		const force = setTimeout(() => app.kill('SIGKILL'), 15_000);
		force.unref();
	});
}

app.on('exit', (code, signal) => {
	if (!stopping) console.error(`[setup] the app exited unexpectedly (${signal ?? `code ${code}`})`);
	shutdown(stopping ? 0 : (code ?? 1));
});
