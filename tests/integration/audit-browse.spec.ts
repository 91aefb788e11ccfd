import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditQuerySchema, browseAudit, type AuditQuery } from '../../src/lib/server/audit/browse';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { seedDemoWork } from '../../src/lib/server/db/demo/work';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { currentSite } from '../../src/lib/server/plant';
import * as work from '../../src/lib/server/work-orders';
import { appDatabase } from './helpers/app-database';

// The audit-trail browser's query (issue 8/10 item 1; REQUIREMENTS AT1, AT6): filters by date,
// person, action, entity type, equipment, work order and free text, paged by a seq cursor,
// against the demo trail in a real database. Each filter is compared with the same question
// asked of the table directly.
let t: Awaited<ReturnType<typeof appDatabase>>;
let releasedId = '';
let releasedNumber = '';

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	await seedDemoWork(DEMO_PASSWORD);
	const site = (await currentSite())!;
	const released = (await work.listWorkOrders(site.id)).find((w) => w.tag === 'XV-4205')!;
	releasedId = released.id;
	releasedNumber = released.number;
}, 120_000);
afterAll(async () => t?.drop());

const query = (q: Record<string, string> = {}) => auditQuerySchema.parse(q);
/** Every event of a filtered view, page by page with the cursor. */
async function all(q: Partial<AuditQuery>) {
	const seqs: number[] = [];
	let after: number | undefined;
	for (let pages = 0; pages < 1000; pages++) {
		const page = await browseAudit({ ...query(), ...q, after });
		seqs.push(...page.events.map((e) => e.seq));
		if (page.next === null) return seqs;
		after = page.next;
	}
	throw new Error('the cursor never ended');
}

describe('the trail, filtered', () => {
	it('pages by the seq cursor, newest first: every event once, in order, 50 to a page', async () => {
		const first = await browseAudit(query());
		expect(first.events).toHaveLength(50);
		expect(first.next).toBe(first.events.at(-1)!.seq);
		const seqs = await all({});
		const [{ n }] = (await t.ownerSql`select count(*)::int as n from audit_event`) as unknown as [
			{ n: number }
		];
		expect(seqs).toHaveLength(n);
		expect(seqs).toEqual([...seqs].sort((a, b) => b - a));
		expect(new Set(seqs).size).toBe(n);
		const asc = await all({ order: 'asc', limit: 200 });
		expect(asc).toEqual([...seqs].reverse());
	});

	it('a work order by its number: its own events and its steps’, nothing else', async () => {
		const seqs = await all({ workOrder: releasedNumber.toLowerCase() });
		const direct = await t.ownerSql`select seq from audit_event
			where entity_id = ${releasedId} or entity_id like ${releasedId + ':%'} order by seq desc`;
		expect(seqs).toEqual(direct.map((r) => Number(r.seq)));
		expect(seqs.length).toBeGreaterThan(30);
		const page = await browseAudit({ ...query(), workOrder: releasedId });
		expect(page.events.every((e) => e.entityId!.startsWith(releasedId))).toBe(true);
		expect(await all({ workOrder: 'WO-1999-0001' })).toEqual([]);
	});

	it('equipment by its tag: its events and those of its work orders', async () => {
		const seqs = await all({ equipment: 'xv-4205' });
		const direct = await t.ownerSql`select e.seq from audit_event e
			where e.entity_id in (select id::text from equipment where tag = 'XV-4205'
				union select id::text from work_orders where equipment_id = (select id from equipment where tag = 'XV-4205'))
			or e.entity_id like ${releasedId + ':%'} order by seq desc`;
		expect(seqs).toEqual(direct.map((r) => Number(r.seq)));
	});

	it('person, action (exact or prefix), entity type, and dates', async () => {
		const [tech1] = await t.ownerSql`select id from accounts where username = 'tech1'`;
		const mine = await all({ person: tech1!.id });
		const direct =
			await t.ownerSql`select seq from audit_event where actor_id = ${tech1!.id} order by seq desc`;
		expect(mine).toEqual(direct.map((r) => Number(r.seq)));
		const releases = await browseAudit({ ...query(), action: 'work_order.release' });
		expect(releases.events.map((e) => e.action)).toEqual(
			releases.events.map(() => 'work_order.release')
		);
		const prefix = await all({ action: 'work_order.' });
		const [{ n }] = (await t.ownerSql`select count(*)::int as n from audit_event
			where action like 'work_order.%'`) as unknown as [{ n: number }];
		expect(prefix).toHaveLength(n);
		const accounts = await browseAudit({ ...query(), entityType: 'account', limit: 200 });
		expect(accounts.events.every((e) => e.entityType === 'account')).toBe(true);
		// Dates: the whole of today (UTC) holds every event; tomorrow none.
		const today = new Date().toISOString().slice(0, 10);
		const tomorrow = new Date(Date.now() + 86_400_000).toISOString().slice(0, 10);
		expect((await all({ from: today, to: today })).length).toBe((await all({})).length);
		expect(await all({ from: tomorrow })).toEqual([]);
	});

	it('free text finds reasons and values, case-insensitively, with wildcards taken literally', async () => {
		const typing = await all({ q: 'TYPING ERROR' });
		const direct = await t.ownerSql`select seq from audit_event
			where reason ilike '%typing error%' or new_values::text ilike '%typing error%'
			or previous_values::text ilike '%typing error%' or actor_name ilike '%typing error%' order by seq desc`;
		expect(typing).toEqual(direct.map((r) => Number(r.seq)));
		expect(typing.length).toBeGreaterThan(0);
		// "%" is a percent sign, not "anything": only events holding one are found.
		const percent = await all({ q: '%' });
		const literal = await t.ownerSql`select seq from audit_event
			where reason like '%\\%%' or new_values::text like '%\\%%'
			or previous_values::text like '%\\%%' or actor_name like '%\\%%' order by seq desc`;
		expect(percent).toEqual(literal.map((r) => Number(r.seq)));
		expect(percent.length).toBeLessThan((await all({})).length);
	});

	it('filters combine (and)', async () => {
		const both = await all({ workOrder: releasedNumber, action: 'signature.' });
		const direct = await t.ownerSql`select seq from audit_event
			where (entity_id = ${releasedId} or entity_id like ${releasedId + ':%'}) and action like 'signature.%'
			order by seq desc`;
		expect(both).toEqual(direct.map((r) => Number(r.seq)));
	});
});

describe('bad queries get a message naming the filter', () => {
	it.each([
		[{ from: 'yesterday' }, 'from', /^from is a date \(2026-12-01\)/],
		[{ person: 'tech1' }, 'person', /account id/],
		[{ action: 'DROP TABLE' }, 'action', /lowercase words/],
		[{ limit: '5000' }, 'limit', /1 to 200/],
		[{ limit: 'many' }, 'limit', /1 to 200/],
		[{ after: '-3' }, 'after', /seq of an event/],
		[{ order: 'sideways' }, 'order', /desc \(newest first\) or asc/],
		[{ q: 'x'.repeat(201) }, 'q', /under 200 characters/]
	])('%o', (input, field, message) => {
		const r = auditQuerySchema.safeParse(input);
		expect(r.success).toBe(false);
		const issue = r.error!.issues[0]!;
		expect(issue.path[0]).toBe(field);
		expect(issue.message).toMatch(message);
	});

	it('an unknown filter is refused rather than ignored', () => {
		const r = auditQuerySchema.safeParse({ user: 'tech1' });
		expect(r.success).toBe(false);
		expect(r.error!.issues[0]!.code).toBe('unrecognized_keys');
	});
});
