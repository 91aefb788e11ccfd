import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	describeFit,
	fitWeibull,
	lifeAtReliability,
	type Observation
} from '../../src/lib/calc/weibull';
import { addDays } from '../../src/lib/fitness';
import type { User } from '../../src/lib/server/auth/guard';
import { seedDemoWork } from '../../src/lib/server/db/demo/index';
import { demoLives, seedDemoReliability } from '../../src/lib/server/db/demo/reliability';
import { DEMO_PASSWORD } from '../../src/lib/server/db/seed';
import * as equipment from '../../src/lib/server/equipment';
import * as procedures from '../../src/lib/server/procedures';
import { personOf } from '../../src/lib/server/records';
import {
	diaphragmLives,
	kaplanMeier,
	readQuery,
	recordPartLife,
	reliabilityView,
	type DiaphragmLife
} from '../../src/lib/server/reliability';
import * as work from '../../src/lib/server/work-orders';
import type { appDatabase } from './helpers/app-database';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';
import { stepActions, workDatabase } from './helpers/work';

// Diaphragm life (issue 9/10 item 6): the lives per equipment class and diaphragm material from
// the carried-over records (part_life_records) and from Countersign's released work orders, the
// diaphragm in service right-censored at today with its SIP cycles from equipment_usage, and the
// Weibull fit of src/lib/calc/weibull.ts (checked there against the NIST/SEMATECH e-Handbook
// §8.4.1.3 example). Expected values here are worked out by hand from the rows the test writes.
// REQUIREMENTS CS-REL1.
let t: Awaited<ReturnType<typeof appDatabase>>;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.61';
let goodValues: () => Promise<Record<string, Record<string, string>>>;
let lotOf: (partNumber: string, lot: string) => Promise<string>;
const ids: Record<string, string> = {};

beforeAll(async () => {
	const w = await workDatabase([]);
	({ t, today, goodValues, lotOf } = w);
	Object.assign(people, w.people);
	// The demo work orders: XV-4205's diaphragm job is released (preventive), the others are not.
	await seedDemoWork(DEMO_PASSWORD);
	for (const tag of ['XV-3101', 'XV-3102', 'XV-3107', 'XV-3108', 'XV-4205'])
		ids[tag] = (await equipment.findByTag(tag))!;
});
afterAll(async () => t?.drop());

/** A carried-over life written straight into the table, as a migration of old records would. */
const carried = (
	tag: string,
	life: { material: string; fitted: string; removed: string; cycles: number; ended: string },
	source: string
) =>
	t.ownerSql`insert into part_life_records (id, equipment_id, material_code, fitted_on, removed_on,
			sip_cycles, ended_by, source, recorded_by_name, recorded_at, audit_seq)
		values (gen_random_uuid(), ${ids[tag]!}, ${life.material}, ${life.fitted}, ${life.removed},
			${life.cycles}, ${life.ended}, ${source}, 'test', now(), 0)`;
const usage = (tag: string, amount: number, at: string) =>
	t.ownerSql`insert into equipment_usage (id, equipment_id, kind, amount, occurred_at, note,
			recorded_by_name, recorded_at, audit_seq)
		values (gen_random_uuid(), ${ids[tag]!}, 'sip_cycles', ${amount}, ${at}::timestamptz, 'test',
			'test', now(), 0)`;
const livesOf = async (tag: string) => (await diaphragmLives()).lives.filter((l) => l.tag === tag);
const brief = (l: DiaphragmLife) => ({
	materialCode: l.materialCode,
	fittedOn: l.fittedOn,
	removedOn: l.removedOn,
	cycles: l.cycles,
	days: l.days,
	failed: l.failed,
	ending: l.ending
});
const daysTo = (day: string, to = today) =>
	Math.round((Date.parse(`${to}T00:00:00Z`) - Date.parse(`${day}T00:00:00Z`)) / 86_400_000);

describe('the lives', () => {
	it('carried-over rows as they are; the diaphragm in service since the last removal counts the SIP cycles since, to today', async () => {
		await carried(
			'XV-3107',
			{
				material: 'DM-PTFE-2P',
				fitted: '2024-01-10',
				removed: '2024-09-01',
				cycles: 150,
				ended: 'failure'
			},
			'Logbook T-1, p. 3'
		);
		await carried(
			'XV-3107',
			{
				material: 'DM-PTFE-2P',
				fitted: '2024-09-01',
				removed: '2025-06-01',
				cycles: 170,
				ended: 'planned'
			},
			'Logbook T-1, p. 9'
		);
		await usage('XV-3107', 7, '2025-05-01T10:00:00Z'); // before the fitting: not counted
		await usage('XV-3107', 5, '2025-07-01T10:00:00Z');
		const lives = await livesOf('XV-3107');
		// The demo counter of XV-3107 is 20 cycles at go-live (demo/index.ts: 20 + (07 mod 7) × 9).
		expect(lives.map(brief)).toEqual([
			{
				materialCode: 'DM-PTFE-2P',
				fittedOn: '2024-01-10',
				removedOn: '2024-09-01',
				cycles: 150,
				days: 235, // 22 + 29 (a leap February) + … counted on a calendar
				failed: true,
				ending: 'failure'
			},
			{
				materialCode: 'DM-PTFE-2P',
				fittedOn: '2024-09-01',
				removedOn: '2025-06-01',
				cycles: 170,
				days: 273,
				failed: false,
				ending: 'planned'
			},
			{
				materialCode: 'DM-PTFE-2P',
				fittedOn: '2025-06-01',
				removedOn: null,
				cycles: 25,
				days: daysTo('2025-06-01'),
				failed: false,
				ending: 'in_service'
			}
		]);
		expect(lives.map((l) => l.source.split(';')[0])).toEqual([
			'Logbook T-1, p. 3',
			'Logbook T-1, p. 9',
			'In service: fitted at the removal recorded in Logbook T-1, p. 9'
		]);
	});

	it('a released preventive diaphragm job ends the life as censored (the demo’s XV-4205)', async () => {
		await carried(
			'XV-4205',
			{
				material: 'DM-EPDM-70',
				fitted: '2024-06-01',
				removed: '2025-05-01',
				cycles: 180,
				ended: 'failure'
			},
			'Logbook B-2, p. 14'
		);
		const [released] = await t.ownerSql`select w.number from work_orders w
			join work_order_transitions x on x.work_order_id = w.id and x.kind = 'released'
			join equipment e on e.id = w.equipment_id where e.tag = 'XV-4205'`;
		const lives = await livesOf('XV-4205');
		expect(lives.map(brief)).toEqual([
			{
				materialCode: 'DM-EPDM-70',
				fittedOn: '2024-06-01',
				removedOn: '2025-05-01',
				cycles: 180,
				days: 334,
				failed: true,
				ending: 'failure'
			},
			{
				materialCode: 'DM-EPDM-70',
				fittedOn: '2025-05-01',
				removedOn: today,
				cycles: 65, // the demo counter: 20 + (05 mod 7) × 9, reported before the job
				days: daysTo('2025-05-01'),
				failed: false,
				ending: 'planned'
			},
			{
				materialCode: 'DM-EPDM-70', // the lot's material code, DIA-040-EP
				fittedOn: today,
				removedOn: null,
				cycles: 0,
				days: 0,
				failed: false,
				ending: 'in_service'
			}
		]);
		expect(lives[1]!.workOrder?.number).toBe(released!.number);
		expect(lives[1]!.source).toMatch(new RegExp(`removed by ${released!.number} \\(preventive\\)`));
		expect(lives[2]!.source).toMatch(new RegExp(`fitted by ${released!.number}`));
	});

	it('a released corrective job ends the life as a failure, with the SIP cycles between the fittings; only released jobs count', async () => {
		await carried(
			'XV-3108',
			{
				material: 'DM-EPDM-70',
				fitted: '2025-01-01',
				removed: '2025-03-01',
				cycles: 120,
				ended: 'planned'
			},
			'Logbook W-2, p. 40'
		);
		await usage('XV-3108', 12, '2025-04-01T08:00:00Z');
		const { view, save, perform, verify } = stepActions(people, ip);
		const pw = DEMO_PASSWORD;
		const { id, number } = await work.createWorkOrder(
			personOf(people.planner!),
			{
				kind: 'corrective',
				equipmentId: ids['XV-3108']!,
				procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
				dueOn: addDays(today, 1),
				priority: 'high',
				assignees: [people.tech1!.id],
				notes: 'Leak through the seat.'
			},
			ip
		);
		await work.startWorkOrder(people.tech1!, id, (await view(id)).revision, ip);
		const values = await goodValues();
		values['new-diaphragm'] = { 'diaphragm-lot': await lotOf('DIA-040-EP', 'L25-0630') };
		for (const { step } of (await view(id)).steps) {
			await save('tech1', id, step.key, values[step.key]!);
			await perform('tech1', id, step.key);
			if (step.verificationRequired) await verify('tech2', id, step.key);
		}
		await work.completeExecution(people.tech1!, id, pw, (await view(id)).revision, ip);
		// Executed, not released: the diaphragm fitted on paper is still the one in service.
		expect((await livesOf('XV-3108')).map((l) => l.ending)).toEqual(['planned', 'in_service']);
		await work.reviewTrail(people.quality!, id, pw, (await view(id)).revision, ip);
		await work.releaseWorkOrder(people.quality!, id, pw, (await view(id)).revision, ip);
		await usage('XV-3108', 3, new Date(Date.now() + 60_000).toISOString()); // after the job

		const lives = await livesOf('XV-3108');
		expect(lives.map(brief)).toEqual([
			{
				materialCode: 'DM-EPDM-70',
				fittedOn: '2025-01-01',
				removedOn: '2025-03-01',
				cycles: 120,
				days: 59,
				failed: false,
				ending: 'planned'
			},
			{
				materialCode: 'DM-EPDM-70',
				fittedOn: '2025-03-01',
				removedOn: today,
				cycles: 29 + 12, // the demo counter (20 + 1 × 9) and the 12 reported in April
				days: daysTo('2025-03-01'),
				failed: true,
				ending: 'failure'
			},
			{
				materialCode: 'DM-EPDM-70',
				fittedOn: today,
				removedOn: null,
				cycles: 3,
				days: 0,
				failed: false,
				ending: 'in_service'
			}
		]);
		expect(lives[1]!.workOrder).toEqual({ id, number });
		expect(lives[1]!.source).toMatch(/removed by WO-\d{4}-\d{4} \(corrective\)/);
	});
});

describe('the fit', () => {
	it('a group’s fit is fitWeibull on the same observations, in SIP cycles and in days, with describeFit’s words', async () => {
		const rows = [
			['2021-03-01', '2021-09-01', 100, 'failure'],
			['2021-09-01', '2022-05-01', 150, 'failure'],
			['2022-05-01', '2023-03-01', 200, 'planned'],
			['2023-03-01', '2023-11-01', 130, 'failure'],
			['2023-11-01', '2024-08-01', 170, 'planned']
		] as const;
		for (const [fitted, removed, cycles, ended] of rows)
			await carried(
				'XV-3101',
				{ material: 'DM-TEST-1', fitted, removed, cycles, ended },
				'Test logbook'
			);
		const group = 'diaphragm_valve:DM-TEST-1';
		const view = await reliabilityView({ group, reliability: 90, unit: 'cycles' });
		expect(view.problem).toBeNull();
		const g = view.group!;
		expect([g.n, g.failures, g.censored]).toEqual([6, 3, 3]);
		// By hand: the five rows and the diaphragm in service since 2024-08-01 with the demo counter
		// of XV-3101 (20 + 1 × 9 = 29 cycles).
		const cycles: Observation[] = [
			{ time: 100, failed: true },
			{ time: 150, failed: true },
			{ time: 200, failed: false },
			{ time: 130, failed: true },
			{ time: 170, failed: false },
			{ time: 29, failed: false }
		];
		const expected = fitWeibull(cycles);
		if (!expected.ok) throw new Error(expected.message);
		const fit = g.fit.fit;
		if (!fit.ok) throw new Error(fit.message);
		expect(fit.value.beta).toBeCloseTo(expected.value.beta, 9);
		expect(fit.value.eta).toBeCloseTo(expected.value.eta, 6);
		expect(fit.value.meanLife).toBeCloseTo(expected.value.meanLife, 6);
		expect(fit.value.betaBounds).toEqual(expected.value.betaBounds);
		expect(fit.value.meanBounds.lower).toBeLessThan(fit.value.meanLife);
		expect(fit.value.meanBounds.upper).toBeGreaterThan(fit.value.meanLife);
		const life = lifeAtReliability(expected.value, 0.9);
		if (!life.ok || !g.fit.suggestion?.ok) throw new Error('no interval');
		expect(g.fit.suggestion.life).toBeCloseTo(life.value.life, 6);
		expect(g.fit.suggestion.words).toBe(
			describeFit(expected.value, 0.9, 'SIP cycles', 'diaphragms')
		);
		// The curve starts at R = 1 and falls; the plot has one point per life.
		expect(g.fit.curve[0]).toEqual({ t: 0, r: 1 });
		expect(g.fit.curve.every((c, i, all) => i === 0 || c.r <= all[i - 1]!.r)).toBe(true);
		expect(g.fit.points).toHaveLength(6);

		const inDays = await reliabilityView({ group, reliability: 95, unit: 'days' });
		const days: Observation[] = [
			{ time: 184, failed: true }, // 2021-03-01 → 2021-09-01
			{ time: 242, failed: true },
			{ time: 304, failed: false },
			{ time: 245, failed: true },
			{ time: 274, failed: false },
			{ time: daysTo('2024-08-01'), failed: false }
		];
		const expectedDays = fitWeibull(days);
		const fitDays = inDays.group!.fit.fit;
		if (!expectedDays.ok || !fitDays.ok) throw new Error('no fit in days');
		expect(fitDays.value.beta).toBeCloseTo(expectedDays.value.beta, 9);
		expect(fitDays.value.eta).toBeCloseTo(expectedDays.value.eta, 6);
	});

	it('a group with too few failures says so plainly and still lists its lives', async () => {
		await carried(
			'XV-3102',
			{
				material: 'DM-TEST-2',
				fitted: '2023-01-01',
				removed: '2023-09-01',
				cycles: 90,
				ended: 'failure'
			},
			'Test logbook'
		);
		await carried(
			'XV-3102',
			{
				material: 'DM-TEST-2',
				fitted: '2023-09-01',
				removed: '2024-06-01',
				cycles: 140,
				ended: 'planned'
			},
			'Test logbook'
		);
		const view = await reliabilityView({
			group: 'diaphragm_valve:DM-TEST-2',
			reliability: 90,
			unit: 'cycles'
		});
		const g = view.group!;
		expect(g.lives).toHaveLength(3);
		expect(g.fit.fit).toEqual({
			ok: false,
			message: 'No fit yet: a fit needs at least two failures; only one is recorded.'
		});
		expect(g.fit.suggestion).toBeNull();
		expect(g.fit.points).toHaveLength(3);
	});

	it('the observed lives sit at their modified Kaplan–Meier estimate (factor (n − i + 0.7)/(n − i + 1.7); NIST/SEMATECH e-Handbook §8.2, from memory)', () => {
		const points = kaplanMeier([
			{ t: 3, failed: true, tag: 'C' },
			{ t: 1, failed: true, tag: 'A' },
			{ t: 2, failed: false, tag: 'B' }
		]);
		expect(points.map((p) => p.tag)).toEqual(['A', 'B', 'C']);
		expect(points[0]!.r).toBeCloseTo(2.7 / 3.7, 12);
		expect(points[1]!.r).toBeCloseTo(2.7 / 3.7, 12);
		expect(points[2]!.r).toBeCloseTo((2.7 / 3.7) * (0.7 / 1.7), 12);
	});
});

describe('carrying lives over', () => {
	it('recordPartLife writes the row with its audit event; a technician is refused; bad values are named', async () => {
		const { id } = await recordPartLife(personOf(people.planner!), {
			equipmentId: ids['XV-3102']!,
			materialCode: 'DM-TEST-3',
			fittedOn: '2022-02-01',
			removedOn: '2022-10-01',
			sipCycles: 88,
			endedBy: 'failure',
			source: 'Test logbook, p. 2'
		});
		const [row] = await t.ownerSql`select r.recorded_by_name, e.action, e.entity_id
			from part_life_records r join audit_event e on e.seq = r.audit_seq where r.id = ${id}`;
		expect(row).toMatchObject({
			recorded_by_name: people.planner!.name,
			action: 'part_life.record',
			entity_id: ids['XV-3102']
		});
		await expect(t.ownerSql`update part_life_records set sip_cycles = 1`).rejects.toThrow();
		const input = {
			equipmentId: ids['XV-3102']!,
			materialCode: 'DM-TEST-3',
			fittedOn: '2022-02-01',
			removedOn: '2022-10-01',
			sipCycles: 88,
			endedBy: 'failure' as const,
			source: 'Test'
		};
		await expect(recordPartLife(personOf(people.tech1!), input)).rejects.toMatchObject({
			status: 403
		});
		await expect(
			recordPartLife(personOf(people.planner!), { ...input, removedOn: '2021-01-01' })
		).rejects.toMatchObject({ field: 'removedOn' });
		await expect(
			recordPartLife(personOf(people.planner!), { ...input, sipCycles: 1.5 })
		).rejects.toMatchObject({ field: 'sipCycles' });
	});

	it('the demo history: 30–45 lives over the demo valves, two materials, each with a usable fit; seeded once', async () => {
		const lives = demoLives(today);
		expect(lives.length).toBeGreaterThanOrEqual(30);
		expect(lives.length).toBeLessThanOrEqual(45);
		expect(new Set(lives.map((l) => l.materialCode))).toEqual(
			new Set(['DM-EPDM-70', 'DM-PTFE-2P'])
		);
		expect(lives.every((l) => l.fittedOn >= addDays(today, -2150) && l.removedOn < today)).toBe(
			true
		);
		for (const m of ['DM-EPDM-70', 'DM-PTFE-2P']) {
			const own = lives.filter((l) => l.materialCode === m);
			expect(own.filter((l) => l.endedBy === 'failure').length, m).toBeGreaterThanOrEqual(8);
			expect(
				fitWeibull(own.map((l) => ({ time: l.sipCycles, failed: l.endedBy === 'failure' }))).ok
			).toBe(true);
		}
		// This database has carried-over rows already: the demo seed adds nothing.
		expect(await seedDemoReliability()).toEqual({ diaphragmLives: 0 });
	});
});

describe('the page’s query', () => {
	it('reads the defaults and the chosen values; refuses what it cannot read with a message that says what to do', () => {
		const q = (s: string) => readQuery(new URLSearchParams(s));
		expect(q('')).toEqual({
			ok: true,
			value: { group: null, reliability: 90, unit: 'cycles' }
		});
		expect(q('group=diaphragm_valve:DM-EPDM-70&reliability=99&unit=days')).toEqual({
			ok: true,
			value: { group: 'diaphragm_valve:DM-EPDM-70', reliability: 99, unit: 'days' }
		});
		const refused = (s: string) => {
			const r = q(s);
			return r.ok ? 'accepted' : r.message;
		};
		expect(refused('reliability=85')).toBe(
			'The reliability must be one of 80, 90, 95, 99 %; “85” is not.'
		);
		expect(refused('reliability=ninety')).toMatch(/must be one of 80, 90, 95, 99 %/);
		expect(refused('reliability=0.9')).toMatch(/must be one of/);
		expect(refused('unit=hours')).toMatch(/SIP cycles \(unit=cycles\) or in days \(unit=days\)/);
		expect(refused('group=nonsense')).toMatch(/choose an equipment class and diaphragm material/);
		expect(refused('unit=days&unit=cycles')).toMatch(/Give “unit” once only/);
	});

	it('an unknown group is answered on the page, not as an error', async () => {
		const view = await reliabilityView({
			group: 'pump:NO-SUCH',
			reliability: 90,
			unit: 'cycles'
		});
		expect(view.group).toBeNull();
		expect(view.problem).toMatch(/no diaphragm lives for that equipment class and material/);
		expect(view.groups.length).toBeGreaterThan(0);
	});

	it('over HTTP: a Planner opens the page; bad parameters get the message on the page, never a 500', async () => {
		const app = await serveBuiltApp(t.appUrl, 3186);
		try {
			const { cookie } = await signInOverHttp(app.origin, 'planner', DEMO_PASSWORD);
			const get = (path: string) =>
				fetch(`${app.origin}${path}`, { headers: { cookie: cookie! }, redirect: 'manual' });
			const ok = await get('/pm/reliability?group=diaphragm_valve%3ADM-TEST-1&reliability=95');
			expect(ok.status).toBe(200);
			const page = await ok.text();
			expect(page).toContain('Suggested PM interval at 95 % reliability');
			expect(page).toContain('XV-3101');
			for (const [query, words] of [
				['reliability=abc', 'The reliability must be one of 80, 90, 95, 99 %'],
				['unit=weeks', 'Count the life in SIP cycles'],
				['group=%00%01', 'is not one Countersign knows'],
				['group=pump%3ANONE', 'There are no diaphragm lives for that equipment class']
			] as const) {
				const response = await get(`/pm/reliability?${query}`);
				expect(response.status, query).toBe(200);
				const text = await response.text();
				expect(text, query).toContain(words);
				expect(text, query).not.toContain('Suggested PM interval');
			}
		} finally {
			await app.stop();
		}
	});
});
