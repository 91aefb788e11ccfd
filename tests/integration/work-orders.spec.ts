import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addDays, siteToday } from '../../src/lib/fitness';
import { verifyChain } from '../../src/lib/server/audit/verify';
import type { User } from '../../src/lib/server/auth/guard';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import * as equipment from '../../src/lib/server/equipment';
import * as instruments from '../../src/lib/server/instruments';
import * as parts from '../../src/lib/server/parts';
import { currentSite } from '../../src/lib/server/plant';
import * as procedures from '../../src/lib/server/procedures';
import { personOf } from '../../src/lib/server/records';
import * as work from '../../src/lib/server/work-orders';
import { appDatabase, setEnv } from './helpers/app-database';

// Work orders from plan to release (issue 5/10; REQUIREMENTS ES3, ES4, ES8, AT2, AT5, AC4, DI1,
// DI3, DI4, MR1, MR3, MR4, SE11). Real PostgreSQL, the demo master data, the domain functions.
let t: Awaited<ReturnType<typeof appDatabase>>;
let siteId: string;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.50';
const pw = DEMO_PASSWORD;

beforeAll(async () => {
	t = await appDatabase();
	setEnv({ AUTH_LOCKOUT_FAILURES: '5' });
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	// A third technician, not trained on anything, and one who is both technician and quality.
	await t.ownerSql`insert into accounts (username, full_name, email, roles, password_hash)
		select 'tech3', 'Ines Varga', 'tech3@ostmere.example', array['technician'], password_hash
		from accounts where username = 'tech1'`;
	await t.ownerSql`insert into accounts (username, full_name, email, roles, password_hash)
		select 'techqa', 'Rui Okafor', 'techqa@ostmere.example', array['technician', 'quality'], password_hash
		from accounts where username = 'tech1'`;
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
	const site = (await currentSite())!;
	siteId = site.id;
	today = siteToday(site.timeZone);
	// techqa is trained on the diaphragm procedure, so that only segregation of duties can stop them.
	const { recordQualification } = await import('../../src/lib/server/qualifications');
	await recordQualification(personOf(people.planner!), {
		accountId: people.techqa!.id,
		procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
		trainedOn: today,
		expiresOn: addDays(today, 365),
		trainer: 'Site trainer',
		note: ''
	});
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
const view = async (id: string) => (await work.getWorkOrder(id))!;
const stepSeen = async (id: string, key: string) =>
	(await view(id)).steps.find((s) => s.step.key === key)!.status.revision;
const save = async (
	who: string,
	id: string,
	key: string,
	values: Record<string, string>,
	more: Partial<work.StepSave> = {}
) =>
	work.saveStep(
		people[who]!,
		id,
		key,
		{
			values,
			reasons: {},
			deviations: {},
			performedAt: null,
			lateReason: '',
			seen: await stepSeen(id, key),
			...more
		},
		ip
	);
const perform = async (who: string, id: string, key: string, password = pw) =>
	work.performStep(people[who]!, id, key, password, await stepSeen(id, key), ip);
const verify = async (who: string, id: string, key: string) =>
	work.verifyStep(people[who]!, id, key, pw, await stepSeen(id, key), ip);

async function lotOf(partNumber: string, lot: string) {
	const list = await parts.listParts(siteId);
	const part = await parts.getPart(list.find((p) => p.partNumber === partNumber)!.id);
	return part!.lots.find((l) => l.supplierLot === lot)!.id;
}
async function instrumentOf(code: string) {
	return (await instruments.listInstruments(siteId, today)).find((i) => i.code === code)!.id;
}

/** The values of every step of MP-DV-01 that pass, by step key. */
async function goodValues(): Promise<Record<string, Record<string, string>>> {
	return {
		isolate: { 'loto-permit': 'LP-0042', depressurised: 'pass', 'surface-temperature': '31' },
		'as-found': { 'as-found-condition': 'Leak at the bonnet' },
		'limiter-before': {
			'limiter-instrument': await instrumentOf('CA-01'),
			'limiter-as-found': '12.5'
		},
		actuator: { 'actuator-air': 'Opened with control air (spring-to-close)' },
		fasteners: { 'fasteners-replaced': '0' },
		seat: { 'seat-condition': 'Cleaned, undamaged' },
		'new-diaphragm': { 'diaphragm-lot': '' },
		reassemble: { 'port-orientation': 'pass' },
		tighten: {
			'thickness-instrument': await instrumentOf('TG-01'),
			'thickness-before': '4.20',
			'thickness-after': '3.65',
			'torque-instrument': await instrumentOf('TW-01'),
			tightening: 'completed'
		},
		'limiter-after': { 'limiter-as-left': '12.5', 'limiter-matches': 'pass' },
		'flow-check': {
			'flow-instrument': await instrumentOf('FM-01'),
			flow: '52.0',
			'no-leak': 'pass'
		},
		return: { 'locks-removed': 'pass' }
	};
}

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
		expect(v.entries.find((x) => x.id === corrected[0]!.corrects)!.value).toEqual({ number: 13 });
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
