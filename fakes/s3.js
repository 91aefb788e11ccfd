// The S3 fake: s3rver on loopback, its objects under a folder (7/10). The app reaches it only
// through @aws-sdk/client-s3, configured from S3_* variables, so a real S3-compatible store
// works in production without code changes. s3rver does not check signatures: evidence is served
// through an authorised app route, never by handing out the store's URLs.
//   node fakes/s3.js --port 4569 --directory .data/s3 --bucket countersign
import S3rver from 's3rver';
import { mkdirSync } from 'node:fs';
import { parseArgs } from 'node:util';

const { values } = parseArgs({
	options: {
		port: { type: 'string', default: '4569' },
		directory: { type: 'string', default: '.data/s3' },
		bucket: { type: 'string', multiple: true, default: ['countersign'] }
	}
});
mkdirSync(values.directory, { recursive: true });
const server = new S3rver({
	address: '127.0.0.1',
	port: Number(values.port),
	directory: values.directory,
	silent: true,
	configureBuckets: values.bucket.map((name) => ({ name }))
});
await server.run();
console.log(`[s3-fake] listening on 127.0.0.1:${values.port}, objects in ${values.directory}`);
for (const signal of ['SIGINT', 'SIGTERM'])
	process.on(signal, () => server.close().finally(() => process.exit(0)));
