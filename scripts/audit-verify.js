// npm run audit:verify: the chain verification of GET /api/v1/audit/verify from the command line,
// on the npm start database (or DATABASE_URL). Prints the same JSON; exit 0 when it holds, 1 when not.
import { ensureDependencies } from './ensure-deps.js';

ensureDependencies({ quiet: true });
const { tsImport } = await import('tsx/esm/api');
const { default: postgres } = await import('postgres');
const cluster = await import('./lib/cluster.js');
const { localUrl } = await import('./lib/local.js');

/** @type {typeof import('../src/lib/server/audit/verify.ts')} */
const { verifyChain } = await tsImport('../src/lib/server/audit/verify.ts', import.meta.url);

let startedCluster = false;
let url = process.env.DATABASE_URL;
if (!url) {
	cluster.ensureCluster();
	startedCluster = cluster.startCluster();
	url = localUrl('app');
}
const sql = postgres(url, { max: 1, onnotice: () => {} });
const result = await verifyChain(sql, {
	onProgress: (checked, total) => process.stderr.write(`\rchecked ${checked} of ${total} events`)
});
process.stderr.write('\n');
await sql.end();
if (startedCluster) cluster.stopCluster();
console.log(JSON.stringify(result));
process.exit(result.ok ? 0 : 1);
