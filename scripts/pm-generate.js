// npm run pm:generate: one run of the PM scheduler (9/10) on the npm start database (or
// DATABASE_URL, the application role): makes the work orders that fall within their lead time,
// as "system: PM scheduler", the follow-ups a crash left out, and the Planners' digest of the day
// (queued in the outbox; the server sends it). Safe to run any number of times, beside the
// server's own scheduler. Prints {"today","made":[…],"already":N,"followUps":[…],"digest":{…}}.
import { ensureDependencies } from './ensure-deps.js';

ensureDependencies({ quiet: true });
const { tsImport } = await import('tsx/esm/api');
const cluster = await import('./lib/cluster.js');
const { localUrl } = await import('./lib/local.js');
const { registerKitAliases } = await import('./lib/register-kit-aliases.js');

registerKitAliases();
let startedCluster = false;
if (!process.env.DATABASE_URL) {
	cluster.ensureCluster();
	startedCluster = cluster.startCluster();
	process.env.DATABASE_URL = localUrl('app');
}
/** @type {typeof import('../src/lib/server/pm.ts')} */
const pm = await tsImport('../src/lib/server/pm.ts', import.meta.url);
let code = 0;
try {
	const run = await pm.generateDueWork();
	const digest = await pm.sendPmDigest();
	console.log(JSON.stringify({ ...run, digest: { day: digest.day, sent: digest.sent } }));
} catch (e) {
	console.error(`pm:generate: ${/** @type {Error} */ (e).message}`);
	code = 1;
} finally {
	await pm.closeDatabase();
	if (startedCluster) cluster.stopCluster();
}
process.exit(code);
