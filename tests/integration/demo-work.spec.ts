import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { verifyChain } from '../../src/lib/server/audit/verify';
import type { User } from '../../src/lib/server/auth/guard';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { seedDemoWork, type WorkSeedResult } from '../../src/lib/server/db/demo/work';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { currentSite } from '../../src/lib/server/plant';
import * as procedures from '../../src/lib/server/procedures';
import * as work from '../../src/lib/server/work-orders';
import { appDatabase, setEnv } from './helpers/app-database';

// The demo work orders (issue 5/10): one or more in every stage, written through the
// work-order module, so that every role's Waiting for me has something. Real PostgreSQL.
let t: Awaited<ReturnType<typeof appDatabase>>;
let siteId: string;
let first: WorkSeedResult;
const people: Record<string, User> = {};

beforeAll(async () => {
	t = await appDatabase();
	setEnv({ AUTH_LOCKOUT_FAILURES: '5' });
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	for (const row of await t.ownerSql`select id, username, full_name, email, roles from accounts`)
		people[row.username] = {
			id: row.id,
			username: row.username,
			name: row.full_name,
			email: row.email,
			roles: row.roles,
			mustChangePassword: false
		};
	await seedDemoMasterData(DEMO_PASSWORD);
	first = await seedDemoWork(DEMO_PASSWORD);
	siteId = (await currentSite())!.id;
});
afterAll(async () => t?.drop());

describe('the demo procedures', () => {
	it('each has its own effective version: one procedure’s version 2 does not supersede another’s version 1 (MR1)', async () => {
		const list = await procedures.listProcedures(siteId);
		const rows = await t.ownerSql`select p.code, max(v.version)::int as version
			from procedures p join procedure_versions v on v.procedure_id = p.id
			join procedure_approvals a on a.version_id = v.id group by p.code order by p.code`;
		expect(list.map((p) => [p.code, p.effectiveVersion])).toEqual(
			rows.map((r) => [r.code, r.version])
		);
		expect(new Set(list.map((p) => p.effectiveVersion))).toEqual(new Set([1, 2]));
	});
});

const byTag = async (tag: string) => {
	const found = (await work.listWorkOrders(siteId)).filter((w) => w.tag === tag);
	expect(found, tag).toHaveLength(1);
	return (await work.getWorkOrder(found[0]!.id))!;
};

describe('the demo work orders', () => {
	it('reports what it added, stage by stage', () => {
		expect(first).toEqual({
			planned: 3,
			inProgress: 1,
			awaitingVerification: 1,
			executed: 1,
			released: 1,
			returned: 1,
			cancelled: 1
		});
	});

	it('plans three: one unassigned, one assigned to tech1 and due soon, one overdue', async () => {
		const list = await work.listWorkOrders(siteId, { status: 'planned' });
		expect(list).toHaveLength(3);
		expect(list.filter((w) => !w.assignees.length).map((w) => w.tag)).toEqual(['P-3102']);
		const soon = list.find((w) => w.tag === 'XV-3105')!;
		expect(soon.assignees.map((a) => a.id)).toEqual([people.tech1!.id]);
		expect(soon.overdue).toBe(false);
		expect(list.filter((w) => w.overdue).map((w) => w.tag)).toEqual(['XV-4204']);
		expect((await work.listWorkOrders(siteId, { due: 'week' })).map((w) => w.tag)).toContain(
			'XV-3105'
		);
		for (const w of list)
			expect((await work.getWorkOrder(w.id))!.equipment.status.status).toBe('in_service');
	});

	it('has work in progress: the first steps performed (one verified), the next entered', async () => {
		const v = await byTag('XV-3103');
		expect(v.status).toBe('in_progress');
		expect(v.equipment.status.status).toBe('out_of_service');
		const state = Object.fromEntries(v.steps.map((s) => [s.step.key, s.status.state]));
		expect(state).toMatchObject({
			isolate: 'verified',
			'as-found': 'performed',
			'limiter-before': 'entered',
			actuator: 'not_started'
		});
	});

	it('has steps performed by tech1 waiting for verification, in tech2’s queue and not in tech1’s', async () => {
		const v = await byTag('XV-3104');
		expect(v.status).toBe('in_progress');
		expect(v.equipment.status.status).toBe('out_of_service');
		const waiting = v.steps.filter(
			(s) => s.step.verificationRequired && s.status.state === 'performed'
		);
		expect(waiting.map((s) => s.step.key)).toEqual(['isolate', 'new-diaphragm']);
		expect(waiting.every((s) => s.status.performed!.recordedBy === people.tech1!.id)).toBe(true);
		const tech2 = await work.queuesFor(people.tech2!);
		expect(tech2.verify!.filter((q) => q.workOrderId === v.wo.id).map((q) => q.stepKey)).toEqual([
			'isolate',
			'new-diaphragm'
		]);
		const tech1 = await work.queuesFor(people.tech1!);
		expect(tech1.verify!.some((q) => q.workOrderId === v.wo.id)).toBe(false);
		expect(tech1.perform!.some((q) => q.workOrderId === v.wo.id)).toBe(true);
	});

	it('has executed work awaiting release, with an open deviation from a low flow', async () => {
		const v = await byTag('XV-3101');
		expect(v.status).toBe('executed');
		expect(v.equipment.status.status).toBe('awaiting_release');
		expect(v.deviations).toHaveLength(1);
		expect(v.deviations[0]).toMatchObject({ stepKey: 'flow-check', fieldKey: 'flow' });
		expect(v.deviations[0]!.dispositionId).toBeNull();
		expect(work.releaseBlockers(v).join(' ')).toMatch(/Deviation DEV-\d{4}-\d{4} is open/);
		const quality = await work.queuesFor(people.quality!);
		expect(quality.review!.map((q) => q.workOrderId)).toEqual([v.wo.id]);
		expect(quality.deviations!.map((q) => q.workOrderId)).toEqual([v.wo.id]);
	});

	it('has released work: verified by tech2, reviewed and released by Quality, back in service', async () => {
		const v = await byTag('XV-4205');
		expect(v.status).toBe('released');
		expect(v.equipment.status.status).toBe('in_service');
		expect(v.deviations).toHaveLength(0);
		// The corrected typing error stays in the record beside its correction.
		expect(v.entries.filter((e) => e.corrects)).toHaveLength(1);
		const signer = (meaning: string) =>
			v.signatures.filter((s) => s.meaning === meaning).map((s) => s.signerId);
		expect(new Set(signer('performed'))).toEqual(new Set([people.tech1!.id]));
		expect(new Set(signer('verified'))).toEqual(new Set([people.tech2!.id]));
		expect(signer('executed')).toEqual([people.tech1!.id]);
		expect(signer('reviewed')).toEqual([people.quality!.id]);
		expect(signer('released')).toEqual([people.quality!.id]);
		expect(v.signatures.every((s) => s.matches)).toBe(true);
	});

	it('has returned work: executed, returned by Quality with a reason, In progress again', async () => {
		const v = await byTag('XV-3102');
		expect(v.status).toBe('in_progress');
		expect(v.equipment.status.status).toBe('out_of_service');
		expect(v.returned?.reason).toMatch(/permit/);
		expect(v.transitions.map((x) => x.kind)).toEqual([
			'planned',
			'started',
			'executed',
			'returned'
		]);
		expect(v.signatures.some((s) => s.meaning === 'returned')).toBe(true);
	});

	it('has cancelled work, with its reason; its equipment stays in service', async () => {
		const v = await byTag('XV-4206');
		expect(v.status).toBe('cancelled');
		expect(v.transitions.at(-1)!.reason).toMatch(/loose clamp/);
		expect(v.equipment.status.status).toBe('in_service');
	});

	it('puts each work order on its own equipment, and gives every role a queue', async () => {
		const list = await work.listWorkOrders(siteId);
		expect(list).toHaveLength(9);
		expect(new Set(list.map((w) => w.equipmentId)).size).toBe(9);
		const planner = await work.queuesFor(people.planner!);
		expect(planner.plan!.map((q) => q.title)).toEqual(
			expect.arrayContaining([
				expect.stringContaining('P-3102'),
				expect.stringContaining('XV-4204')
			])
		);
		const tech1 = await work.queuesFor(people.tech1!);
		expect(tech1.perform!.length).toBeGreaterThanOrEqual(4);
		const tech2 = await work.queuesFor(people.tech2!);
		expect(tech2.perform!.map((q) => q.title)).toEqual([expect.stringContaining('XV-4204')]);
	});

	it('adds nothing on a second run', async () => {
		const [before] = await t.ownerSql`select
			(select count(*)::int from work_orders) as orders,
			(select count(*)::int from audit_event) as events`;
		expect(await seedDemoWork(DEMO_PASSWORD)).toEqual({
			planned: 0,
			inProgress: 0,
			awaitingVerification: 0,
			executed: 0,
			released: 0,
			returned: 0,
			cancelled: 0
		});
		const [after] = await t.ownerSql`select
			(select count(*)::int from work_orders) as orders,
			(select count(*)::int from audit_event) as events`;
		expect(after).toEqual(before);
	});

	it('leaves an audit chain that verifies', async () => {
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});
