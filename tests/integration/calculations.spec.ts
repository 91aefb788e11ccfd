import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addDays } from '../../src/lib/fitness';
import { verifyChain } from '../../src/lib/server/audit/verify';
import type { User } from '../../src/lib/server/auth/guard';
import * as equipment from '../../src/lib/server/equipment';
import * as procedures from '../../src/lib/server/procedures';
import { personOf } from '../../src/lib/server/records';
import * as work from '../../src/lib/server/work-orders';
import type { appDatabase } from './helpers/app-database';
import { stepActions, workDatabase } from './helpers/work';

// The trade's calculations on the server (issue 6/10 items 4, 5, 7, 8; REQUIREMENTS DI3, AT2):
// calculated fields computed from the stored inputs, values in another unit judged converted,
// the TUR stored with the instrument, guided tightening passes in order. Real PostgreSQL.
let t: Awaited<ReturnType<typeof appDatabase>>;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.60';
let instrumentOf: (code: string) => Promise<string>;
let goodValues: () => Promise<Record<string, Record<string, string>>>;

beforeAll(async () => {
	const w = await workDatabase(['MP-DV-01']);
	({ t, today, instrumentOf, goodValues } = w);
	Object.assign(people, w.people);
});
afterAll(async () => t?.drop());

const { view, stepSeen, save, perform } = stepActions(people, ip);
const refusal = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected a refusal');
		},
		(e: unknown) => e as Error & { status?: number; fields?: Record<string, string> }
	);

/** A started DN 25 job (4 fasteners, 6 N·m, band 10–15 % in the demo data) with steps 1–8 performed. */
async function jobAtTighten(tag: string) {
	const { id } = await work.createWorkOrder(personOf(people.planner!), {
		kind: 'corrective',
		equipmentId: (await equipment.findByTag(tag))!,
		procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
		dueOn: addDays(today, 3),
		priority: 'routine',
		assignees: [people.tech1!.id, people.tech2!.id],
		notes: ''
	});
	await work.startWorkOrder(people.tech1!, id, (await view(id)).revision, ip);
	const values = await goodValues();
	for (const key of [
		'isolate',
		'as-found',
		'limiter-before',
		'actuator',
		'fasteners',
		'seat',
		'new-diaphragm',
		'reassemble'
	]) {
		await save('tech1', id, key, values[key]!);
		await perform('tech1', id, key);
		const step = (await view(id)).steps.find((s) => s.step.key === key)!.step;
		if (step.verificationRequired)
			await work.verifyStep(
				people.tech2!,
				id,
				key,
				'lantern-harbour-orbit',
				await stepSeen(id, key),
				ip
			);
	}
	return id;
}
const rows = async (id: string) => {
	const [r] = await t.ownerSql`select
		(select count(*)::int from step_entries where work_order_id = ${id}) as entries,
		(select count(*)::int from tightening_passes where work_order_id = ${id}) as passes,
		(select count(*)::int from deviations where work_order_id = ${id}) as deviations`;
	return r;
};

describe('MP-DV-01 version 2 came through the normal approval (6/10 item 8)', () => {
	it('version 1 is superseded, version 2 is approved with a reason and the fields of 6/10', async () => {
		const p = (await procedures.getProcedure((await procedures.findProcedureByCode('MP-DV-01'))!))!;
		expect(p.versions.map((v) => [v.version, v.status])).toEqual([
			[2, 'approved'],
			[1, 'superseded']
		]);
		const v2 = (await procedures.getVersion(p.versions[0]!.id))!;
		expect(v2.version.reason).toMatch(/Guided cross-pattern tightening/);
		const tighten = v2.version.content.steps.find((s) => s.key === 'tighten')!;
		expect(tighten.fields.map((f) => f.kind)).toEqual([
			'instrument',
			'number',
			'number',
			'calculated',
			'tightening'
		]);
		expect(tighten.fields.find((f) => f.key === 'compression')!.inputs).toEqual([
			'thickness-before',
			'thickness-after'
		]);
		// The approval signature still matches the version's content.
		expect(v2.signatures.every((s) => s.matches)).toBe(true);
	});
});

describe('calculated fields are computed by the server from the stored inputs', () => {
	let id: string;
	beforeAll(async () => {
		id = await jobAtTighten('XV-3104');
	});

	it('a value posted for the calculated field is ignored; thicknesses in, 13.1 % out, within the band', async () => {
		await save('tech1', id, 'tighten', {
			'thickness-instrument': await instrumentOf('TG-01'),
			'thickness-before': '4.20',
			'thickness-after': '3.65',
			compression: '99'
		});
		const v = await view(id);
		const c = v.entries.find((e) => e.fieldKey === 'compression')!;
		expect(c.value).toMatchObject({
			calculated: 13.1,
			unit: '%',
			formula: 'diaphragm_compression',
			judgement: 'within',
			band: { min: 10, max: 15 }
		});
		const inputs = (c.value as { inputs: { field: string; number: number; entryId: string }[] })
			.inputs;
		expect(inputs.map((i) => [i.field, i.number])).toEqual([
			['thickness-before', 4.2],
			['thickness-after', 3.65]
		]);
		// Each input names the entry it was computed from.
		for (const i of inputs) expect(v.entries.some((e) => e.id === i.entryId)).toBe(true);
		expect(c.withinLimits).toBe(true);
	});

	it('after > before is refused with a clear message on the calculated field; nothing is stored', async () => {
		const before = await rows(id);
		const e = await refusal(
			save(
				'tech1',
				id,
				'tighten',
				{ 'thickness-after': '4.50' },
				{ reasons: { 'thickness-after': 'Misread' } }
			)
		);
		expect(e.status).toBe(400);
		expect(e.fields?.compression).toMatch(/cannot be more than before/);
		expect(await rows(id)).toEqual(before);
	});

	it('a corrected input over the band needs a description, then recalculates with a deviation', async () => {
		const before = await rows(id);
		const e = await refusal(
			save(
				'tech1',
				id,
				'tighten',
				{ 'thickness-after': '3.20' },
				{ reasons: { 'thickness-after': 'Re-measured' } }
			)
		);
		expect(e.status).toBe(422);
		expect(e.fields?.['deviation:compression']).toMatch(/outside the valve’s band/);
		expect(await rows(id)).toEqual(before);
		const saved = await save(
			'tech1',
			id,
			'tighten',
			{ 'thickness-after': '3.20' },
			{
				reasons: { 'thickness-after': 'Re-measured' },
				deviations: {
					compression: 'Compression 23.8 %: bonnet over-tightened; diaphragm to be replaced.'
				}
			}
		);
		expect(saved.map((s) => s.field)).toEqual(['thickness-after', 'compression']);
		expect(saved[1]!.deviation).toMatch(/^DEV-\d{4}-\d{4}$/);
		const v = await view(id);
		const c = v.entries.filter((e) => e.fieldKey === 'compression');
		expect(c).toHaveLength(2);
		expect(c[1]!.corrects).toBe(c[0]!.id);
		expect(c[1]!.reason).toBe(
			'Recalculated from the corrected diaphragm thickness after tightening.'
		);
		expect(c[1]!.value).toMatchObject({ calculated: 23.8, judgement: 'over' });
		expect(c[1]!.withinLimits).toBe(false);
	});
});

describe('guided tightening: passes in order, with the server’s time', () => {
	let id: string;
	beforeAll(async () => {
		id = await jobAtTighten('XV-3105');
	});
	const tick = async (n: number, who = 'tech1') =>
		work.tickPass(people[who]!, id, 'tighten', 'tightening', n, await stepSeen(id, 'tighten'), ip);

	it('a pass out of order → 409 naming the next; nothing stored', async () => {
		const before = await rows(id);
		const e = await refusal(tick(2));
		expect(e.status).toBe(409);
		expect(e.message).toMatch(/Tick the passes in order: next is Snug/);
		expect(await rows(id)).toEqual(before);
	});

	it('the database refuses an out-of-order pass whatever writes it', async () => {
		const [a] = await t.ownerSql`select id from accounts where username = 'tech1'`;
		await expect(
			t.ownerSql`insert into tightening_passes (id, work_order_id, step_key, field_key, round, pass, name, unit,
				recorded_by, recorded_by_name, recorded_at, audit_seq)
				values (gen_random_uuid(), ${id}, 'tighten', 'tightening', 1, 3, 'x', 'N·m', ${a!.id}, 'x', now(), 1)`
		).rejects.toThrow(/out of order/);
	});

	it('the final torque before every pass is ticked is refused', async () => {
		await tick(1);
		const before = await rows(id);
		const e = await refusal(
			work.saveStep(
				people.tech1!,
				id,
				'tighten',
				{
					values: { tightening: '6' },
					wrenches: { tightening: await instrumentOf('TW-01') },
					reasons: {},
					deviations: {},
					performedAt: null,
					lateReason: '',
					seen: await stepSeen(id, 'tighten')
				},
				ip
			)
		);
		expect(e.status).toBe(400);
		expect(e.fields?.tightening).toBe('Tick every pass first: 1 of 5 done.');
		expect(await rows(id)).toEqual(before);
	});

	it('passes ticked in order, then the final torque and wrench: the entry keeps every pass with its time', async () => {
		const again = await refusal(tick(1));
		expect(again.status).toBe(409);
		expect(again.message).toMatch(/already ticked/);
		for (const n of [2, 3, 4, 5]) await tick(n);
		const tooMany = await refusal(tick(6));
		expect(tooMany.status).toBe(409);
		await save(
			'tech1',
			id,
			'tighten',
			{
				'thickness-instrument': await instrumentOf('TG-01'),
				'thickness-before': '4.20',
				'thickness-after': '3.65',
				tightening: '53.1',
				wrench: await instrumentOf('TW-01')
			},
			{ units: { tightening: 'lbf·in' } }
		);
		const v = await view(id);
		const e = v.entries.find((x) => x.fieldKey === 'tightening')!;
		const value = e.value as {
			tightening: {
				fasteners: number;
				sequence: number[];
				passes: { pass: number; targetTorque: number | null; at: string }[];
			};
			finalTorque: { number: number; unit: string };
			wrench: { code: string };
		};
		expect(value.tightening.fasteners).toBe(4);
		expect(value.tightening.sequence).toEqual([1, 3, 2, 4]);
		// Targets from the valve's 6 N·m (demo data): snug, 30 %, 70 %, 100 %, circular 100 % (PCC-1 legacy, from memory).
		expect(value.tightening.passes.map((p) => p.targetTorque)).toEqual([null, 1.8, 4.2, 6, 6]);
		const times = value.tightening.passes.map((p) => Date.parse(p.at));
		expect([...times].sort((a, b) => a - b)).toEqual(times);
		expect(value.finalTorque).toEqual({ number: 53.1, unit: 'lbf·in' });
		expect(value.wrench.code).toBe('TW-01');
		// The passes are audited events of the work order.
		const [n] = await t.ownerSql`select count(*)::int as n from audit_event
			where entity_id = ${id} and action = 'work_order.tightening_pass'`;
		expect(n!.n).toBe(5);
	});

	it('after saving, a further tick → 409; starting again needs a reason and makes the entry missing', async () => {
		const e = await refusal(tick(1));
		expect(e.status).toBe(409);
		expect(e.message).toMatch(/start the passes again/);
		const noReason = await refusal(
			work.restartPasses(
				people.tech1!,
				id,
				'tighten',
				'tightening',
				' ',
				await stepSeen(id, 'tighten'),
				ip
			)
		);
		expect(noReason.status).toBe(422);
		await work.restartPasses(
			people.tech1!,
			id,
			'tighten',
			'tightening',
			'Diaphragm refitted',
			await stepSeen(id, 'tighten'),
			ip
		);
		const v = await view(id);
		expect(v.steps.find((s) => s.step.key === 'tighten')!.status.missing).toEqual(['tightening']);
		await tick(1);
		expect((await view(id)).passes.filter((p) => p.round === 2).map((p) => p.pass)).toEqual([0, 1]);
	});

	it('round 2 saved: the entry is corrected for the restart’s reason; a torque off the valve’s figure needs a description', async () => {
		for (const n of [2, 3, 4, 5]) await tick(n);
		const direct = async (torque: string, more: Partial<work.StepSave> = {}) =>
			work.saveStep(
				people.tech1!,
				id,
				'tighten',
				{
					values: { tightening: torque },
					units: { tightening: 'N·m' },
					wrenches: { tightening: await instrumentOf('TW-01') },
					reasons: {},
					deviations: {},
					performedAt: null,
					lateReason: '',
					seen: await stepSeen(id, 'tighten'),
					...more
				},
				ip
			);
		// 8 N·m on a valve whose figure is 6 N·m (demo data): outside, so a description is needed.
		const before = await rows(id);
		const off = await refusal(direct('8'));
		expect(off.status).toBe(422);
		expect(off.fields?.['deviation:tightening']).toMatch(/not the valve’s figure/);
		expect(await rows(id)).toEqual(before);
		await direct('6');
		const v = await view(id);
		const entries = v.entries.filter((e) => e.fieldKey === 'tightening');
		expect(entries).toHaveLength(2);
		expect(entries[1]!.corrects).toBe(entries[0]!.id);
		expect(entries[1]!.reason).toBe('Passes started again: Diaphragm refitted');
		expect(entries[1]!.withinLimits).toBe(true);
		expect((entries[1]!.value as { tightening: { round: number } }).tightening.round).toBe(2);
		expect(v.steps.find((s) => s.step.key === 'tighten')!.status.missing).toEqual([]);
	});

	it('the database refuses a pass added to a round that was started again', async () => {
		const [a] = await t.ownerSql`select id from accounts where username = 'tech1'`;
		await expect(
			t.ownerSql`insert into tightening_passes (id, work_order_id, step_key, field_key, round, pass, name, unit,
				recorded_by, recorded_by_name, recorded_at, audit_seq)
				values (gen_random_uuid(), ${id}, 'tighten', 'tightening', 1, 6, 'x', 'N·m', ${a!.id}, 'x', now(), 1)`
		).rejects.toThrow(/started again/);
	});

	it('a second technician cannot tick on a job they are not assigned to (403)', async () => {
		const e = await refusal(tick(2, 'tech3'));
		expect(e.status).toBe(403);
	});

	it('the audit chain verifies', async () => {
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});

describe('reference instruments: the TUR is stored with the instrument entry (ANSI/NCSL Z540.3)', () => {
	it('FM-01 (U95 1.5 L/min) on the 40–80 L/min flow: TUR 40 / 3 = 13.33', async () => {
		const id = await jobAtTighten('XV-3103');
		await save('tech1', id, 'tighten', (await goodValues()).tighten!);
		await perform('tech1', id, 'tighten');
		await save('tech1', id, 'limiter-after', (await goodValues())['limiter-after']!);
		await perform('tech1', id, 'limiter-after');
		await save('tech1', id, 'flow-check', { 'flow-instrument': await instrumentOf('FM-01') });
		const e = (await view(id)).entries.find((x) => x.fieldKey === 'flow-instrument')!;
		expect(e.value).toMatchObject({ code: 'FM-01', tur: [{ field: 'flow', ratio: 13.33 }] });
	});
});
