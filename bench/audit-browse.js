// bench/audit-browse: the audit-trail browser's query (issue 8/10 item 1) on a trail of
// BENCH_BROWSE_EVENTS events (default 100,000) in a throwaway database (never the demo one):
// p50/p95 of one filtered page of 50 for each kind of filter, 200 runs each after a warm-up.
// Target: p95 ≤ 150 ms. Run: npm run bench -- audit-browse
import { ensureDependencies } from '../scripts/ensure-deps.js';

ensureDependencies({ quiet: true });
const { registerKitAliases } = await import('../scripts/lib/register-kit-aliases.js');
registerKitAliases();
const { tsImport } = await import('tsx/esm/api');
const { performance } = await import('node:perf_hooks');
const { randomUUID } = await import('node:crypto');
const { localUrl } = await import('../scripts/lib/local.js');
const { throwawayDatabase } = await import('../scripts/lib/database.js');
const { default: postgres } = await import('postgres');

const total = Number(process.env.BENCH_BROWSE_EVENTS ?? 100_000);
const runs = Number(process.env.BENCH_BROWSE_RUNS ?? 200);
const throwaway = await throwawayDatabase();
process.env.DATABASE_URL = localUrl('app', throwaway.name);
/** @type {typeof import('../src/lib/server/audit/chain.ts')} */
const chain = await tsImport('../src/lib/server/audit/chain.ts', import.meta.url);
/** @type {typeof import('../src/lib/server/audit/browse.ts')} */
const browse = await tsImport('../src/lib/server/audit/browse.ts', import.meta.url);
/** @type {typeof import('../src/lib/server/db/index.ts')} */
const database = await tsImport('../src/lib/server/db/index.ts', import.meta.url);
const owner = postgres(localUrl('owner', throwaway.name), { max: 1, onnotice: () => {} });

// A trail shaped like a plant's: 40 people, 2,000 work orders with 12 steps each, the usual actions.
const people = Array.from({ length: 40 }, () => randomUUID());
const orders = Array.from({ length: 2000 }, () => randomUUID());
const actions = [
	'work_order.entry',
	'work_order.step_performed',
	'work_order.step_verified',
	'signature.sign',
	'auth.sign_in',
	'work_order.release',
	'equipment.status',
	'evidence.attach'
];
const fmt = (/** @type {number} */ x) => Math.round(x).toLocaleString('en-GB');
const fillStart = performance.now();
let prev = '00'.repeat(32);
const baseAt = Date.now() - total * 60_000; // one event a minute, up to now
for (let seq = 1; seq <= total;) {
	const rows = [];
	for (let k = 0; k < 4000 && seq <= total; k++, seq++) {
		const wo = /** @type {string} */ (orders[seq % orders.length]);
		const action = /** @type {string} */ (actions[seq % 7 === 0 ? 3 : seq % actions.length]);
		const fields = {
			seq,
			at: new Date(baseAt + seq * 60_000).toISOString(),
			actor_kind: 'person',
			actor_id: /** @type {string} */ (people[seq % people.length]),
			actor_name: `Person ${seq % people.length}`,
			actor_roles: ['technician'],
			action,
			entity_type: 'work_order',
			entity_id: seq % 3 === 0 ? `${wo}:step-${seq % 12}` : wo,
			new_values: { value: (seq % 500) / 10, unit: 'N·m', field: `field-${seq % 30}` },
			previous_values: null,
			reason: seq % 97 === 0 ? `Typing error at entry ${seq}` : null,
			client_address: '192.0.2.1'
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
await owner`update audit_chain_head set seq = ${total}, hash = decode(${prev}, 'hex')`;
await owner`analyze audit_event`;
console.log(
	`filled a trail of ${fmt(total)} events in ${((performance.now() - fillStart) / 1000).toFixed(0)} s`
);

const day = new Date(baseAt + Math.floor(total / 2) * 60_000).toISOString().slice(0, 10);
const cases = /** @type {[string, Record<string, string>][]} */ ([
	['no filter (newest 50)', {}],
	['one work order (by id)', { workOrder: orders[17] }],
	['one person', { person: people[5] }],
	['action, exact', { action: 'work_order.release' }],
	['action, prefix', { action: 'signature.' }],
	['one day', { from: day, to: day }],
	['free text, common', { q: 'N·m' }],
	['free text, rare', { q: 'Typing error at entry 4' }],
	['person + work order', { person: people[5], workOrder: orders[5] }],
	['one work order, second page', { workOrder: orders[17], after: String(total - 5000) }]
]);
console.log(`\none page of 50, ${runs} runs each (ms):`);
console.log('  filter                          p50     p95   rows');
let worst = 0;
for (const [name, q] of cases) {
	const parsed = browse.auditQuerySchema.parse(q);
	for (let i = 0; i < 10; i++) await browse.browseAudit(parsed);
	/** @type {number[]} */
	const times = [];
	let rows = 0;
	for (let i = 0; i < runs; i++) {
		const t0 = performance.now();
		rows = (await browse.browseAudit(parsed)).events.length;
		times.push(performance.now() - t0);
	}
	times.sort((a, b) => a - b);
	const p = (/** @type {number} */ f) =>
		times[Math.min(times.length - 1, Math.floor(f * times.length))] ?? 0;
	worst = Math.max(worst, p(0.95));
	console.log(
		`  ${name.padEnd(30)} ${p(0.5).toFixed(1).padStart(6)} ${p(0.95).toFixed(1).padStart(7)} ${String(rows).padStart(6)}`
	);
}
console.log(`\nworst p95 ${worst.toFixed(1)} ms (target ≤ 150 ms)`);
await database.closeDatabase();
await owner.end();
throwaway.drop();
