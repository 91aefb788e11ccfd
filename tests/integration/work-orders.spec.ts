import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addDays } from '../../src/lib/fitness';
import { verifyChain } from '../../src/lib/server/audit/verify';
import type { User } from '../../src/lib/server/auth/guard';
import { DEMO_PASSWORD } from '../../src/lib/server/db/seed';
import * as equipment from '../../src/lib/server/equipment';
import * as procedures from '../../src/lib/server/procedures';
import { personOf } from '../../src/lib/server/records';
import * as work from '../../src/lib/server/work-orders';
import type { appDatabase } from './helpers/app-database';
import { stepActions, workDatabase } from './helpers/work';

// Work orders from plan to release (issue 5/10; REQUIREMENTS ES3, ES4, ES8, AT2, AT5, AC4, DI1,
// DI3, DI4, MR1, MR3, MR4, SE11). Real PostgreSQL, the demo master data, the domain functions.
let t: Awaited<ReturnType<typeof appDatabase>>;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.50';
const pw = DEMO_PASSWORD;

let lotOf: (partNumber: string, lot: string) => Promise<string>;
let goodValues: () => Promise<Record<string, Record<string, string>>>;

beforeAll(async () => {
	const w = await workDatabase(['MP-DV-01']);
	({ t, today, lotOf, goodValues } = w);
	Object.assign(people, w.people);
});
afterAll(async () => t?.drop());

const refusal = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected a refusal');
		},
		(e: unknown) =>
			e as Error & { status?: number; field?: string; fields?: Record<string, string> }
	);

async function newJob(tag = 'XV-3104', assignees = ['tech1', 'techqa']) {
	return work.createWorkOrder(personOf(people.planner!), {
		kind: 'corrective',
		equipmentId: (await equipment.findByTag(tag))!,
		procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
		dueOn: addDays(today, 3),
		priority: 'high',
		assignees: assignees.map((u) => people[u]!.id),
		notes: 'Leak at the bonnet reported by production.'
	});
}
const { view, save, perform, verify } = stepActions(people, ip);

describe('the diaphragm job from plan to release', () => {
	let id: string;
	it('a Planner creates it on the effective procedure version (MR1), numbered WO-<year>-<n>', async () => {
		const created = await newJob();
		id = created.id;
		expect(created.number).toMatch(/^WO-\d{4}-\d{4}$/);
		const v = await view(id);
		expect(v.status).toBe('planned');
		expect(v.wo.procedureCode).toBe('MP-DV-01');
		expect(v.equipment.status.status).toBe('in_service');
	});

	it('a technician who is not assigned cannot start it; the refusal is audited (AT7)', async () => {
		const e = await refusal(work.startWorkOrder(people.tech2!, id, (await view(id)).revision, ip));
		expect(e.status).toBe(403);
		const [row] = await t.ownerSql`select count(*)::int as n from audit_event
			where action = 'auth.access_denied' and entity_id = ${id}`;
		expect(row!.n).toBeGreaterThan(0);
	});

	it('an assigned technician starts it: the equipment goes Out of service', async () => {
		await work.startWorkOrder(people.tech1!, id, (await view(id)).revision, ip);
		const v = await view(id);
		expect(v.status).toBe('in_progress');
		expect(v.equipment.status.status).toBe('out_of_service');
	});

	it('executes every step, with one value corrected and one outside its limits', async () => {
		const values = await goodValues();
		values['new-diaphragm'] = { 'diaphragm-lot': await lotOf('DIA-025-EP', 'L25-0412') };
		// A typing error first: corrected with a reason, the old entry stays.
		await save('tech1', id, 'isolate', { ...values.isolate!, 'surface-temperature': '13' });
		const e = await refusal(save('tech1', id, 'isolate', values.isolate!));
		expect(e.status).toBe(422);
		expect(e.fields?.['reason:surface-temperature']).toMatch(/reason/);
		await save('tech1', id, 'isolate', values.isolate!, {
			reasons: { 'surface-temperature': 'Typing error at entry' }
		});
		await perform('tech1', id, 'isolate');
		await verify('tech2', id, 'isolate');
		for (const key of Object.keys(values).slice(1)) {
			if (key === 'flow-check') {
				// Outside its limits: refused without a description, then a deviation is raised.
				const low = { ...values[key]!, flow: '35.0' };
				const d = await refusal(save('tech1', id, key, low));
				expect(d.status).toBe(422);
				const saved = await save('tech1', id, key, low, {
					deviations: { flow: 'Flow 35 L/min below the 40 L/min minimum; line pressure low.' }
				});
				expect(saved.find((x) => x.field === 'flow')!.deviation).toMatch(/^DEV-\d{4}-\d{4}$/);
			} else await save('tech1', id, key, values[key]!);
			await perform('tech1', id, key);
			// techqa (technician and Quality) verifies one step: from then on they may not review or release.
			if (key === 'new-diaphragm') await verify('techqa', id, key);
			if (key === 'flow-check') await verify('tech2', id, key);
		}
		const v = await view(id);
		expect(
			v.steps.every((s) => s.status.state === 'performed' || s.status.state === 'verified')
		).toBe(true);
		const corrected = v.entries.filter((x) => x.corrects);
		expect(corrected).toHaveLength(1);
		expect(v.entries.find((x) => x.id === corrected[0]!.corrects)!.value).toEqual({
			number: 13,
			unit: '°C'
		});
		expect(v.deviations).toHaveLength(1);
	});

	it('the technician signs it Executed: the equipment awaits release', async () => {
		await work.completeExecution(people.tech1!, id, pw, (await view(id)).revision, ip);
		const v = await view(id);
		expect(v.status).toBe('executed');
		expect(v.equipment.status.status).toBe('awaiting_release');
	});

	it('release is refused with an open deviation and without the trail review (AT5, MR4)', async () => {
		const e = await refusal(
			work.releaseWorkOrder(people.quality!, id, pw, (await view(id)).revision, ip)
		);
		expect(e.status).toBe(409);
		expect(e.message).toMatch(/Deviation DEV-.* is open/);
		expect(e.message).toMatch(/audit trail is not recorded/);
	});

	it('someone who took part cannot review, disposition or release (ES8, AT6)', async () => {
		const v = await view(id);
		const r = await refusal(work.reviewTrail(people.techqa!, id, pw, v.revision, ip));
		expect(r.status).toBe(403);
		const d = await refusal(
			work.dispositionDeviation(
				people.techqa!,
				id,
				v.deviations[0]!.id,
				'accepted',
				'No impact.',
				pw,
				(await view(id)).revision,
				ip
			)
		);
		expect(d.status).toBe(403);
		const [row] = await t.ownerSql`select count(*)::int as n from audit_event
			where action = 'signature.refused' and new_values->>'reason' = 'reviewer_took_part'`;
		expect(row!.n).toBe(2);
	});

	it('Quality reviews the trail, dispositions the deviation and releases: In service', async () => {
		let v = await view(id);
		await work.reviewTrail(people.quality!, id, pw, v.revision, ip);
		v = await view(id);
		await work.dispositionDeviation(
			people.quality!,
			id,
			v.deviations[0]!.id,
			'accepted',
			'Flow measured at low line pressure; repeated at nominal pressure by production, no impact.',
			pw,
			(await view(id)).revision,
			ip
		);
		v = await view(id);
		expect(work.releaseBlockers(v)).toEqual([]);
		await work.releaseWorkOrder(people.quality!, id, pw, v.revision, ip);
		v = await view(id);
		expect(v.status).toBe('released');
		expect(v.equipment.status.status).toBe('in_service');
		expect(v.signatures.every((s) => s.matches)).toBe(true);
		expect(v.signatures.map((s) => s.meaning)).toEqual(
			expect.arrayContaining(['performed', 'verified', 'executed', 'reviewed', 'released'])
		);
	});

	it('the chain verifies after the whole journey', async () => {
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});
