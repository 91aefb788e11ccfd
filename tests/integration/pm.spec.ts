import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { root } from '../../scripts/lib/local.js';
import { addDays } from '../../src/lib/fitness';
import type { User } from '../../src/lib/server/auth/guard';
import { db } from '../../src/lib/server/db/index';
import * as equipment from '../../src/lib/server/equipment';
import * as pm from '../../src/lib/server/pm';
import * as procedures from '../../src/lib/server/procedures';
import { personOf } from '../../src/lib/server/records';
import * as work from '../../src/lib/server/work-orders';
import type { appDatabase } from './helpers/app-database';
import { workDatabase } from './helpers/work';

// PM schedules and the scheduler (issue 9/10 item 1): the Planner's schedules are records with
// their audit events; the scheduler makes each due work order once, as "system: PM scheduler",
// however many runs there are at once — enforced by the database (work_orders_pm_once). The
// due-date arithmetic itself is checked in src/lib/calc/schedule.spec.ts. REQUIREMENTS CS-PM1,
// CS-PM3.
let t: Awaited<ReturnType<typeof appDatabase>>;
let today: string;
const people: Record<string, User> = {};
let valve = '';
let procedure = '';

beforeAll(async () => {
	const w = await workDatabase([]);
	({ t, today } = w);
	Object.assign(people, w.people);
	valve = (await equipment.findByTag('XV-3104'))!;
	procedure = (await procedures.findProcedureByCode('MP-DV-01'))!;
});
afterAll(async () => t?.drop());

const refusal = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected a refusal');
		},
		(e: unknown) => e as Error & { status?: number; field?: string }
	);
const schedule = (over: Record<string, unknown> = {}) => ({
	title: 'Diaphragm XV-3104',
	target: 'equipment' as const,
	equipmentId: valve,
	procedureId: procedure,
	intervalEvery: 12,
	intervalUnit: 'month' as const,
	usageKind: 'sip_cycles' as const,
	usageLimit: 100,
	leadDays: 14,
	graceDays: 7,
	leadUsage: 10,
	graceUsage: 5,
	startsOn: addDays(today, -365 + 10), // due in 10 days: within the 14 days of lead time
	...over
});
const madeFor = async (scheduleId: string) =>
	t.ownerSql`select w.id, w.number, w.pm_basis, w.recorded_by_name, w.kind from work_orders w
		where w.pm_schedule_id = ${scheduleId} order by w.audit_seq`;

describe('PM schedules', () => {
	it('only a Planner plans them; a technician is refused and the refusal audited (AC1, AT7)', async () => {
		const e = await refusal(pm.createSchedule(personOf(people.tech1!), schedule()));
		expect(e.status).toBe(403);
		const [row] = await t.ownerSql`select count(*)::int as n from audit_event
			where action = 'auth.access_denied' and actor_name = ${people.tech1!.name}`;
		expect(row!.n).toBeGreaterThan(0);
	});

	it('a schedule without a limit, with half an interval, or a lead above its limit is refused with the field named', async () => {
		const by = personOf(people.planner!);
		const cases: [Record<string, unknown>, string][] = [
			[
				{ intervalEvery: null, intervalUnit: null, usageKind: null, usageLimit: null },
				'intervalEvery'
			],
			[{ intervalUnit: null }, 'intervalEvery'],
			[{ leadUsage: 100 }, 'leadUsage'],
			[{ equipmentId: null }, 'equipmentId'],
			[{ startsOn: '2026-02-30' }, 'startsOn'],
			[{ usageLimit: -1 }, 'usageLimit']
		];
		for (const [over, field] of cases) {
			const e = await refusal(pm.createSchedule(by, schedule(over)));
			expect(e.field, JSON.stringify(over)).toBe(field);
		}
		expect(await t.ownerSql`select 1 from pm_schedules`).toHaveLength(0);
	});

	it('a schedule is created with its audit event; a change is a new version with its reason (AT1)', async () => {
		const by = personOf(people.planner!);
		const { id } = await pm.createSchedule(by, schedule({ title: 'Pump seal P-2101' }));
		await pm.changeSchedule(
			by,
			id,
			{ ...schedule({ title: 'Pump seal P-2101' }), intervalEvery: 6, active: false },
			'Halved after two early seal failures; paused until the spare parts arrive.'
		);
		const versions = await t.ownerSql`select version, interval_every, active, reason
			from pm_schedule_versions where schedule_id = ${id} order by version`;
		expect(versions.map((v) => [v.version, v.interval_every, v.active])).toEqual([
			[1, 12, true],
			[2, 6, false]
		]);
		const [change] = await t.ownerSql`select new_values, previous_values, reason from audit_event
			where action = 'pm_schedule.change' and entity_id = ${id}`;
		expect(change).toMatchObject({
			new_values: { version: 2, intervalEvery: 6, active: false },
			previous_values: { version: 1, intervalEvery: 12, active: true }
		});
		// A paused schedule makes nothing.
		const run = await pm.generateDueWork();
		expect(run.made.filter((m) => m.schedule === 'Pump seal P-2101')).toEqual([]);
		// Versions are append-only in the database too.
		await expect(t.ownerSql`update pm_schedule_versions set active = true`).rejects.toThrow();
	});

	it('the scheduler makes the due work order once, as “system: PM scheduler”; a second run makes none', async () => {
		const { id } = await pm.createSchedule(personOf(people.planner!), schedule());
		const first = await pm.generateDueWork();
		expect(first.made).toHaveLength(1);
		expect(first.made[0]).toMatchObject({ tag: 'XV-3104', schedule: 'Diaphragm XV-3104' });
		const second = await pm.generateDueWork();
		expect(second.made).toHaveLength(0);
		expect(second.already).toBeGreaterThanOrEqual(1);
		const rows = await madeFor(id);
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({
			pm_basis: 'start#0',
			recorded_by_name: 'system: PM scheduler',
			kind: 'preventive'
		});
		const [event] = await t.ownerSql`select actor_kind, actor_name, new_values from audit_event
			where action = 'work_order.create' and entity_id = ${rows[0]!.id}`;
		expect(event).toMatchObject({ actor_kind: 'system', actor_name: 'PM scheduler' });
		expect(event!.new_values).toMatchObject({ dueOn: addDays(today, 10), pmSchedule: id });
		// The work order is due on the schedule's calendar date and follows the effective version.
		const v = (await work.getWorkOrder(rows[0]!.id as string))!;
		expect(v.plan.dueOn).toBe(addDays(today, 10));
		expect(v.wo.procedureCode).toBe('MP-DV-01');
	});

	it('two scheduler runs at once make exactly one work order; the database refuses a duplicate outright', async () => {
		const tag = 'XV-3105';
		const id = (await equipment.findByTag(tag))!;
		const { id: scheduleId } = await pm.createSchedule(
			personOf(people.planner!),
			schedule({ title: `Diaphragm ${tag}`, equipmentId: id })
		);
		const runs = await Promise.all([
			pm.generateDueWork(),
			pm.generateDueWork(),
			pm.generateDueWork()
		]);
		const made = runs.flatMap((r) => r.made).filter((m) => m.tag === tag);
		expect(made).toHaveLength(1);
		const rows = await madeFor(scheduleId);
		expect(rows).toHaveLength(1);
		// Straight into the table with the same key: the unique index refuses it.
		await expect(
			t.ownerSql`insert into work_orders (id, site_id, number, kind, equipment_id, procedure_version_id,
				pm_schedule_id, pm_basis, recorded_by_name, recorded_at, audit_seq)
				select gen_random_uuid(), site_id, 'WO-DUP-0001', kind, equipment_id, procedure_version_id,
				pm_schedule_id, pm_basis, recorded_by_name, recorded_at, audit_seq
				from work_orders where id = ${rows[0]!.id}`
		).rejects.toThrow(/work_orders_pm_once/);
	});

	it('usage decides when the cycles come first: 95 SIP cycles make it due soon, whatever the calendar', async () => {
		const tag = 'XV-3106';
		const id = (await equipment.findByTag(tag))!;
		const { id: scheduleId } = await pm.createSchedule(
			personOf(people.planner!),
			schedule({ title: `Diaphragm ${tag}`, equipmentId: id, startsOn: today })
		);
		const statusOf = async () =>
			(await pm.listSchedules()).schedules.find((s) => s.id === scheduleId)!.targets[0]!;
		expect((await statusOf()).due).toMatchObject({ state: 'not_due', decidedBy: 'calendar' });
		await db().transaction((tx) =>
			equipment.recordUsage(tx, personOf(people.planner!), id, {
				kind: 'sip_cycles',
				amount: 95,
				occurredAt: new Date(),
				note: 'Counter reading from the batch records'
			})
		);
		const s = await statusOf();
		expect(s.usageNow - s.basisUsage).toBe(95);
		expect(s.due).toMatchObject({ state: 'due_soon', decidedBy: 'usage', generateNow: true });
		const run = await pm.generateDueWork();
		expect(run.made.filter((m) => m.tag === tag)).toHaveLength(1);
	});

	it('a cancelled PM work order lets the scheduler make the next one on the same basis', async () => {
		const [{ id: scheduleId }] =
			(await t.ownerSql`select schedule_id as id from pm_schedule_versions
			where title = 'Diaphragm XV-3104'`) as unknown as [{ id: string }];
		const [made] = await madeFor(scheduleId);
		await work.cancelWorkOrder(
			personOf(people.planner!),
			made!.id as string,
			'Made twice by mistake during the shutdown planning.',
			(await work.getWorkOrder(made!.id as string))!.revision
		);
		const run = await pm.generateDueWork();
		expect(run.made.filter((m) => m.tag === 'XV-3104')).toHaveLength(1);
		expect((await madeFor(scheduleId)).map((r) => r.pm_basis)).toEqual(['start#0', 'start#1']);
	});

	it('npm run pm:generate runs the scheduler from the command line and prints what it made', () => {
		const out = spawnSync(process.execPath, [join(root, 'scripts/pm-generate.js')], {
			encoding: 'utf8',
			env: { ...process.env, DATABASE_URL: t.appUrl }
		});
		expect(out.status, out.stderr).toBe(0);
		const result = JSON.parse(out.stdout.trim().split('\n').at(-1)!);
		expect(result).toMatchObject({ today, made: [] });
		expect(result.already).toBeGreaterThanOrEqual(3);
	});
});
