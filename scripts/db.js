// npm run db:migrate | db:seed — against the npm start database (local cluster, started and
// stopped again if it was not running), or the server DATABASE_URL / MIGRATION_DATABASE_URL name.
import { ensureDependencies } from './ensure-deps.js';

ensureDependencies();
const task = process.argv[2];
if (task !== 'migrate' && task !== 'seed') {
	console.error('usage: node scripts/db.js migrate|seed');
	process.exit(2);
}
const { prepareDatabase } = await import('./lib/database.js');
const { stopCluster } = await import('./lib/cluster.js');
// prepareDatabase migrates in both cases; `seed` seeds even when data exists (it is idempotent).
const { startedCluster } = await prepareDatabase({ seed: task === 'seed' ? 'always' : 'never' });
if (startedCluster) stopCluster();
