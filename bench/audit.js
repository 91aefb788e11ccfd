// bench/audit: figures for the hash-chained audit trail (issue 3/10), in a throwaway database
// (never the demo one). Prints, in one run:
//  1. the append rate with 4 concurrent writers (events/s, each append its own transaction with
//     the chain head locked) beside a raw single-row INSERT rate into a plain table of the same
//     width (4 writers, one transaction per row), and their ratio (target ≥ 0.5);
//  2. the verification rate over BENCH_AUDIT_EVENTS events (default 1,000,000) beside Node's raw
//     SHA-256 rate over the same canonical bytes, their ratio (target ≥ 0.25), and peak memory.
// Run: npm run bench -- audit
import { ensureDependencies } from '../scripts/ensure-deps.js';

ensureDependencies({ quiet: true });
const { tsImport } = await import('tsx/esm/api');
const { performance } = await import('node:perf_hooks');
const { createHash, randomBytes } = await import('node:crypto');
const { localUrl } = await import('../scripts/lib/local.js');
const { throwawayDatabase } = await import('../scripts/lib/database.js');
const { default: postgres } = await import('postgres');
const { drizzle } = await import('drizzle-orm/postgres-js');

/** @type {typeof import('../src/lib/server/audit/index.ts')} */
const audit = await tsImport('../src/lib/server/audit/index.ts', import.meta.url);
/** @type {typeof import('../src/lib/server/audit/chain.ts')} */
const chain = await tsImport('../src/lib/server/audit/chain.ts', import.meta.url);
/** @type {typeof import('../src/lib/server/audit/verify.ts')} */
const { verifyChain } = await tsImport('../src/lib/server/audit/verify.ts', import.meta.url);
/** @type {typeof import('../src/lib/server/db/schema/index.ts')} */
const schema = await tsImport('../src/lib/server/db/schema/index.ts', import.meta.url);

const total = Number(process.env.BENCH_AUDIT_EVENTS ?? 1_000_000);
const seconds = Number(process.env.BENCH_AUDIT_SECONDS ?? 10);
const writers = 4;

const throwaway = await throwawayDatabase();
const dbName = throwaway.name;
const owner = postgres(localUrl('owner', dbName), { max: 1, onnotice: () => {} });
await owner`create table raw_event (like audit_event including defaults)`;
await owner`grant select, insert on raw_event to countersign_app`;

/** @param {number} i */
const input = (i) => ({
	actor: /** @type {const} */ ({
		kind: 'person',
		id: '6f1c2b9e-8d2a-4c53-9f0e-3a7d5b1e2c44',
		name: 'Bench Person',
		roles: ['technician']
	}),
	action: 'bench.append',
	entityType: 'bench',
	entityId: `e-${i % 100}`,
	newValues: { value: i * 1.5, unit: 'N·m', result: 'within' },
	previousValues: null,
	reason: null,
	clientAddress: '192.0.2.1'
});

const fmt = (/** @type {number} */ x) => Math.round(x).toLocaleString('en-GB');

// 1. Appends: chained vs raw, 4 writers each, for `seconds` each.
async function timed(/** @type {(db: any, sql: any, i: number) => Promise<unknown>} */ work) {
	const conns = Array.from({ length: writers }, () =>
		postgres(localUrl('app', dbName), { max: 1, onnotice: () => {} })
	);
	const until = performance.now() + seconds * 1000;
	let n = 0;
	await Promise.all(
		conns.map(async (sql) => {
			const db = drizzle(sql, { schema });
			while (performance.now() < until) await work(db, sql, n++);
		})
	);
	await Promise.all(conns.map((c) => c.end()));
	return n / seconds;
}
const chained = await timed((db, _sql, i) =>
	db.transaction((/** @type {any} */ tx) => audit.recordEvent(tx, input(i)))
);
const zero = '00'.repeat(32);
const raw = await timed((_db, sql, i) => {
	const e = input(i);
	return sql`insert into raw_event (seq, at, actor_kind, actor_id, actor_name, actor_roles, action, entity_type, entity_id,
		new_values, previous_values, reason, client_address, prev_hash, hash)
		values (${String(-1 - i)}::int8, now(), ${e.actor.kind}, ${e.actor.id}, ${e.actor.name}, ${'{technician}'}::text[], ${e.action},
		${e.entityType}, ${e.entityId}, ${JSON.stringify(e.newValues)}::jsonb, null, null, ${e.clientAddress},
		decode(${zero}, 'hex'), decode(${randomBytes(32).toString('hex')}, 'hex'))`;
});
console.log(`append, ${writers} writers, ${seconds} s each:`);
console.log(`  chained appends   ${fmt(chained)} events/s`);
console.log(
	`  raw inserts       ${fmt(raw)} rows/s (plain table, same columns, one transaction per row)`
);
console.log(`  ratio             ${(chained / raw).toFixed(2)} (target ≥ 0.5)`);

// 2. Fill the chain to `total` events in bulk (hashes computed here, as the app would), then verify.
const [{ seq: headSeq, hash: headHash }] = /** @type {[{ seq: string, hash: string }]} */ (
	/** @type {unknown} */ (
		await owner`select seq::int8 as seq, encode(hash, 'hex') as hash from audit_chain_head`
	)
);
let seq = Number(headSeq);
let prev = headHash;
const fillStart = performance.now();
const baseAt = Date.now();
while (seq < total) {
	const rows = [];
	for (let k = 0; k < 4000 && seq < total; k++) {
		seq++;
		const e = input(seq);
		const fields = {
			seq,
			at: new Date(baseAt + seq).toISOString(),
			actor_kind: e.actor.kind,
			actor_id: e.actor.id,
			actor_name: e.actor.name,
			actor_roles: [...e.actor.roles],
			action: e.action,
			entity_type: e.entityType,
			entity_id: e.entityId,
			new_values: e.newValues,
			previous_values: null,
			reason: null,
			client_address: e.clientAddress
		};
		const hash = chain.chainHash(prev, fields);
		rows.push({
			...fields,
			at: new Date(fields.at),
			new_values: owner.json(fields.new_values),
			prev_hash: Buffer.from(prev, 'hex'),
			hash: Buffer.from(hash, 'hex')
		});
		prev = hash;
	}
	await owner`insert into audit_event ${owner(rows)}`;
}
await owner`update audit_chain_head set seq = ${seq}, hash = decode(${prev}, 'hex')`;
console.log(
	`filled the chain to ${fmt(seq)} events in ${((performance.now() - fillStart) / 1000).toFixed(0)} s`
);

let peak = process.memoryUsage().rss;
const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 100);
const app = postgres(localUrl('app', dbName), { max: 1, onnotice: () => {} });
const v0 = performance.now();
const result = await verifyChain(app);
const verifySeconds = (performance.now() - v0) / 1000;
clearInterval(sampler);
if (!result.ok) throw new Error(`the bench chain does not verify: ${JSON.stringify(result)}`);

// Raw SHA-256 over the same canonical bytes (read once more, hashed without anything else).
const texts = [];
let hashedBytes = 0;
for (let after = 0; ;) {
	const rows =
		await app`select seq::int8 as seq, at, actor_kind, actor_id, actor_name, actor_roles, action, entity_type, entity_id,
		new_values, previous_values, reason, client_address, encode(prev_hash, 'hex') as prev_hash, encode(hash, 'hex') as hash
		from audit_event where seq > ${after} order by seq limit 20000`;
	if (rows.length === 0) break;
	for (const row of rows) texts.push(chain.canonicalText(chain.fieldsOf(/** @type {any} */ (row))));
	after = Number(rows.at(-1)?.seq);
	if (texts.length >= 200_000) break; // a sample is enough for a rate
}
const prevBytes = Buffer.alloc(32);
const h0 = performance.now();
for (const text of texts) {
	createHash('sha256').update(prevBytes).update(text, 'utf8').digest();
	hashedBytes += text.length;
}
const rawRate = texts.length / ((performance.now() - h0) / 1000);
await app.end();
await owner.end();
throwaway.drop();

const verifyRate = result.events / verifySeconds;
console.log(
	`verification of ${fmt(result.events)} events: ${verifySeconds.toFixed(1)} s, ${fmt(verifyRate)} events/s, peak RSS ${(peak / 2 ** 20).toFixed(0)} MiB`
);
console.log(
	`  raw SHA-256 over the same canonical bytes: ${fmt(rawRate)} events/s (${texts.length.toLocaleString('en-GB')} sampled, ${(hashedBytes / texts.length).toFixed(0)} bytes each)`
);
console.log(`  ratio             ${(verifyRate / rawRate).toFixed(2)} (target ≥ 0.25)`);
