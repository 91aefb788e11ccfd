import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { addDays } from '../../src/lib/fitness';
import type { User } from '../../src/lib/server/auth/guard';
import { retighteningCheck } from '../../src/lib/server/db/demo/procedures';
import { DEMO_PASSWORD } from '../../src/lib/server/db/seed';
import * as equipment from '../../src/lib/server/equipment';
import * as instruments from '../../src/lib/server/instruments';
import * as procedures from '../../src/lib/server/procedures';
import { personOf, type Recorder } from '../../src/lib/server/records';
import * as work from '../../src/lib/server/work-orders';
import type { appDatabase } from './helpers/app-database';
import { stepActions, workDatabase } from './helpers/work';

// Every refusal of the work-order module (issue 5/10): each is a clear message, stores nothing,
// and — where it is a security event — is audited (REQUIREMENTS AC1, AC3, AC4, AT2, AT5, AT6,
// AT7, DI1, DI3, ES4, ES8, MR1, MR3, MR4, SE11). Real PostgreSQL, the demo master data, the
// domain functions. "Nothing stored" compares every row of the work order (plans, transitions,
// entries, signoffs, deviations, dispositions, signatures, its equipment's status changes and
// its non-refusal audit events) before and after.
let t: Awaited<ReturnType<typeof appDatabase>>;
let siteId: string;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.61';
const pw = DEMO_PASSWORD;
const wrong = 'not-the-password-9';
const planner = () => personOf(people.planner!);

let lotOf: (partNumber: string, lot: string) => Promise<string>;
let goodValues: () => Promise<Record<string, Record<string, string>>>;

beforeAll(async () => {
	// techqa is trained on the diaphragm and the pump procedures, so that only segregation of
	// duties can stop them; tech2's pump training stays lapsed (demo data).
	const w = await workDatabase(['MP-DV-01', 'MP-PU-01']);
	({ t, siteId, today, lotOf, goodValues } = w);
	Object.assign(people, w.people);
	// Calipers that must not be used: calibration expired, withdrawn from use, never calibrated.
	const caliper = {
		kind: 'Caliper',
		description: 'Digital caliper, 150 mm',
		rangeMin: 0,
		rangeMax: 150,
		unit: 'mm',
		uncertaintyU95: 0.03
	};
	const expired = await instruments.registerInstrument(planner(), siteId, {
		...caliper,
		code: 'CA-07',
		retired: false
	});
	await instruments.recordCalibration(planner(), expired, {
		performedOn: addDays(today, -400),
		dueOn: addDays(today, -10),
		certificate: 'CAL-T-0007',
		asFound: 'within',
		asLeft: 'pass',
		note: 'Test data'
	});
	const retired = await instruments.registerInstrument(planner(), siteId, {
		...caliper,
		code: 'CA-08',
		retired: true
	});
	await instruments.recordCalibration(planner(), retired, {
		performedOn: addDays(today, -30),
		dueOn: addDays(today, 300),
		certificate: 'CAL-T-0008',
		asFound: 'within',
		asLeft: 'pass',
		note: 'Test data'
	});
	await instruments.registerInstrument(planner(), siteId, {
		...caliper,
		code: 'CA-09',
		retired: false
	});
});
afterAll(async () => {
	vi.useRealTimers();
	await t?.drop();
});

type Refusal = Error & {
	status?: number;
	field?: string;
	fields?: Record<string, string>;
	code?: string;
};
const refusal = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected a refusal');
		},
		(e: unknown) => e as Refusal
	);

/** Every row that belongs to a work order: what a refusal must leave as it was. */
async function rowsOf(id: string) {
	const [r] = await t.ownerSql`select
		(select count(*) from work_order_plans where work_order_id = ${id})::int as plans,
		(select count(*) from work_order_transitions where work_order_id = ${id})::int as transitions,
		(select count(*) from step_entries where work_order_id = ${id})::int as entries,
		(select count(*) from step_signoffs where work_order_id = ${id})::int as signoffs,
		(select count(*) from deviations where work_order_id = ${id})::int as deviations,
		(select count(*) from deviation_dispositions dd join deviations d on d.id = dd.deviation_id
			where d.work_order_id = ${id})::int as dispositions,
		(select count(*) from signatures where record_id = ${id} or record_id like ${id + ':%'}
			or record_id in (select id::text from deviations where work_order_id = ${id}))::int as signatures,
		(select count(*) from equipment_status_changes
			where equipment_id = (select equipment_id from work_orders where id = ${id}))::int as "equipmentStatus",
		(select count(*) from audit_event where (entity_id = ${id} or entity_id like ${id + ':%'})
			and action not in ('auth.access_denied', 'signature.refused', 'signature.failed'))::int as events`;
	return r!;
}

type Audit = { action: string; reason?: string; rule?: string; what?: string };
/**
 * Security events (AT7) about a work order, its steps, or other records named (a deviation);
 * with no ids, about no record in particular (a role check that names only the function).
 */
async function securityEvents(ids: string[], a: Audit) {
	let n = 0;
	for (const id of ids.length ? ids : [null]) {
		const [r] = await t.ownerSql`select count(*)::int as n from audit_event
			where action = ${a.action}
			and (${id}::text is null or entity_id = ${id} or entity_id like ${id + ':%'})
			and (${a.reason ?? null}::text is null or new_values->>'reason' = ${a.reason ?? null})
			and (${a.rule ?? null}::text is null or new_values->>'rule' = ${a.rule ?? null})
			and (${a.what ?? null}::text is null or new_values->>'what' = ${a.what ?? null})`;
		n += r!.n;
	}
	return n;
}

/**
 * Runs a refused call: the status, a message in words, nothing stored on the work orders named,
 * and exactly one new security event where `audit` is given.
 */
async function expectRefused(
	on: string | string[],
	run: () => Promise<unknown>,
	expected: {
		status: number;
		message: RegExp;
		field?: string;
		audit?: Audit;
		auditOn?: string[];
	}
): Promise<Refusal> {
	const ids = [on].flat();
	const auditIds = expected.auditOn ?? ids;
	const before = await Promise.all(ids.map(rowsOf));
	const auditBefore = expected.audit ? await securityEvents(auditIds, expected.audit) : 0;
	const e = await refusal(run());
	expect(e.status, e.message).toBe(expected.status);
	expect(e.message).toMatch(expected.message);
	if (expected.field)
		expect(Object.keys(e.fields ?? { [e.field ?? '']: '' })).toContain(expected.field);
	expect(await Promise.all(ids.map(rowsOf))).toEqual(before);
	if (expected.audit) expect(await securityEvents(auditIds, expected.audit)).toBe(auditBefore + 1);
	return e;
}

const procedureId = async (code: string) => (await procedures.findProcedureByCode(code))!;
const equipmentId = async (tag: string) => (await equipment.findByTag(tag))!;

async function newJob(tag: string, assignees: string[], code = 'MP-DV-01') {
	const created = await work.createWorkOrder(planner(), {
		kind: 'corrective',
		equipmentId: await equipmentId(tag),
		procedureId: await procedureId(code),
		dueOn: addDays(today, 3),
		priority: 'high',
		assignees: assignees.map((u) => people[u]!.id),
		notes: 'Refusal test.'
	});
	return created.id;
}
const { view, stepSeen, save, perform, verify } = stepActions(people, ip);
const seenOf = async (id: string) => (await view(id)).revision;
const stepState = async (id: string, key: string) =>
	(await view(id)).steps.find((s) => s.step.key === key)!.status.state;
const start = async (who: string, id: string) =>
	work.startWorkOrder(people[who]!, id, await seenOf(id), ip);
const complete = async (who: string, id: string, password = pw) =>
	work.completeExecution(people[who]!, id, password, await seenOf(id), ip);
const review = async (who: string, id: string, password = pw) =>
	work.reviewTrail(people[who]!, id, password, await seenOf(id), ip);
const release = async (who: string, id: string, password = pw) =>
	work.releaseWorkOrder(people[who]!, id, password, await seenOf(id), ip);

async function instrumentOf(code: string) {
	return (await instruments.listInstruments(siteId, today)).find((i) => i.code === code)!.id;
}
const verifiedSteps = ['isolate', 'new-diaphragm', 'flow-check'];

/** Starts a diaphragm job and takes it to In progress with every step done, then signs it Executed. */
async function executedJob(
	tag: string,
	options: {
		assignees?: string[];
		performer?: (key: string) => string;
		verifier?: (key: string) => string;
		lowFlow?: boolean;
		executor?: string;
	} = {}
) {
	const id = await newJob(tag, options.assignees ?? ['tech1', 'techqa']);
	await start('tech1', id);
	const values = await goodValues();
	for (const key of Object.keys(values)) {
		const who = options.performer?.(key) ?? 'tech1';
		if (key === 'flow-check' && options.lowFlow)
			await save(
				who,
				id,
				key,
				{ ...values[key]!, flow: '35.0' },
				{
					deviations: { flow: 'Flow 35 L/min below the 40 L/min minimum; line pressure low.' }
				}
			);
		else await save(who, id, key, values[key]!);
		await perform(who, id, key);
		if (verifiedSteps.includes(key)) await verify(options.verifier?.(key) ?? 'tech2', id, key);
	}
	await complete(options.executor ?? 'tech1', id);
	return id;
}

// ── Planning ─────────────────────────────────────────────────────────────────

describe('planning refusals', () => {
	const workOrderCount = async () =>
		(await t.ownerSql`select count(*)::int as n from work_orders`)[0]!.n as number;
	const job = async (over: Partial<work.NewWorkOrder> = {}, by: Recorder = planner()) =>
		work.createWorkOrder(by, {
			kind: 'corrective',
			equipmentId: await equipmentId('XV-3104'),
			procedureId: await procedureId('MP-DV-01'),
			dueOn: addDays(today, 3),
			priority: 'routine',
			assignees: [people.tech1!.id],
			notes: '',
			...over
		});

	it('a work order on a procedure with no approved version is refused (MR1): nothing is created', async () => {
		const { id } = await procedures.createProcedure(
			planner(),
			siteId,
			'MP-DV-09',
			retighteningCheck
		);
		const before = await workOrderCount();
		const e = await refusal(job({ procedureId: id }));
		expect(e.status).toBe(400);
		expect(e.field).toBe('procedureId');
		expect(e.message).toMatch(/no approved version: work can only follow an approved procedure/);
		expect(await workOrderCount()).toBe(before);
	});

	it('a procedure for another class of equipment, or equipment that is not of this site, is refused', async () => {
		const before = await workOrderCount();
		const e = await refusal(job({ procedureId: await procedureId('MP-PU-01') }));
		expect(e.status).toBe(400);
		expect(e.message).toMatch(/applies to another class of equipment than XV-3104/);
		const f = await refusal(job({ equipmentId: '00000000-0000-4000-8000-000000000001' }));
		expect(f.message).toMatch(/Choose equipment of this site/);
		expect(await workOrderCount()).toBe(before);
	});

	it('a person assigned twice, or someone who is not a technician, is refused', async () => {
		const before = await workOrderCount();
		const e = await refusal(job({ assignees: [people.tech1!.id, people.tech1!.id] }));
		expect([e.status, e.field, e.message]).toEqual([
			400,
			'assignees',
			'A person is assigned twice.'
		]);
		const f = await refusal(job({ assignees: [people.quality!.id] }));
		expect(f.message).toMatch(/Assign only active technicians/);
		expect(await workOrderCount()).toBe(before);
	});

	it('a technician or an administrator cannot create work orders (AC1, AC3): 403, audited (AT7)', async () => {
		const before = await workOrderCount();
		const denied = async () =>
			(
				await t.ownerSql`select count(*)::int as n from audit_event
				where action = 'auth.access_denied' and new_values->>'what' = 'create work orders'`
			)[0]!.n as number;
		const audited = await denied();
		for (const who of ['tech1', 'admin']) {
			const e = await refusal(job({}, personOf(people[who]!)));
			expect(e.status).toBe(403);
			expect(e.message).toMatch(/Your roles do not allow you to create work orders/);
		}
		expect(await denied()).toBe(audited + 2);
		expect(await workOrderCount()).toBe(before);
	});

	describe('cancel and re-plan', () => {
		let id: string;
		beforeAll(async () => {
			id = await newJob('XV-3101', ['tech1']);
		});
		const plan = () => ({
			dueOn: addDays(today, 5),
			priority: 'urgent' as const,
			assignees: [people.tech1!.id],
			notes: 'Moved up'
		});

		it('cancel with a blank reason → 422 (AT2)', async () => {
			for (const reason of ['', '   '])
				await expectRefused(
					id,
					async () => work.cancelWorkOrder(planner(), id, reason, await seenOf(id), ip),
					{ status: 422, field: 'reason', message: /Give a reason/ }
				);
		});

		it('cancel by a technician → 403, audited (AC1, AT7)', async () => {
			await expectRefused(
				id,
				async () =>
					work.cancelWorkOrder(personOf(people.tech1!), id, 'Not needed', await seenOf(id), ip),
				{
					status: 403,
					message: /Your roles do not allow you to cancel work orders/,
					// The event names the function, not the work order (mustHold without an entity).
					audit: { action: 'auth.access_denied', what: 'cancel work orders' },
					auditOn: []
				}
			);
		});

		it('cancel or re-plan with a stale expected version → 409', async () => {
			const seen = (await seenOf(id)) - 1;
			await expectRefused(id, () => work.cancelWorkOrder(planner(), id, 'Not needed', seen, ip), {
				status: 409,
				message: /changed since you opened it/
			});
			await expectRefused(
				id,
				() => work.changePlan(planner(), id, plan(), 'Production asked for it', seen, ip),
				{ status: 409, message: /changed since you opened it/ }
			);
		});

		it('re-plan with a blank reason → 422 (AT2); with nothing changed → 400; with a non-technician → 400', async () => {
			await expectRefused(
				id,
				async () => work.changePlan(planner(), id, plan(), ' ', await seenOf(id), ip),
				{ status: 422, field: 'reason', message: /Give a reason/ }
			);
			const v = await view(id);
			const same = {
				dueOn: v.plan.dueOn,
				priority: v.plan.priority as 'high',
				assignees: v.plan.assignees,
				notes: v.plan.notes
			};
			await expectRefused(
				id,
				async () => work.changePlan(planner(), id, same, 'No change', await seenOf(id), ip),
				{ status: 400, message: /Nothing was changed/ }
			);
			await expectRefused(
				id,
				async () =>
					work.changePlan(
						planner(),
						id,
						{ ...plan(), assignees: [people.inspector!.id] },
						'Reassigned',
						await seenOf(id),
						ip
					),
				{ status: 400, message: /Assign only active technicians/ }
			);
		});

		it('once cancelled it cannot be cancelled again, started or re-planned (409)', async () => {
			await work.cancelWorkOrder(
				planner(),
				id,
				'Duplicate of another work order',
				await seenOf(id),
				ip
			);
			expect((await view(id)).status).toBe('cancelled');
			await expectRefused(
				id,
				async () => work.cancelWorkOrder(planner(), id, 'Again', await seenOf(id), ip),
				{ status: 409, message: /only before execution starts; this one is Cancelled/ }
			);
			await expectRefused(id, () => start('tech1', id), {
				status: 409,
				message: /Cancelled: only planned work can start/
			});
			await expectRefused(
				id,
				async () => work.changePlan(planner(), id, plan(), 'Reopen', await seenOf(id), ip),
				{ status: 409, message: /cannot change/ }
			);
		});
	});
});

// ── Execution ────────────────────────────────────────────────────────────────

describe('execution refusals on one diaphragm job (XV-3104)', () => {
	let id: string;
	let values: Record<string, Record<string, string>>;
	beforeAll(async () => {
		id = await newJob('XV-3104', ['tech1', 'techqa', 'tech3']);
		values = await goodValues();
	});

	it('values and signatures before the start → 409', async () => {
		await expectRefused(id, () => save('tech1', id, 'isolate', values.isolate!), {
			status: 409,
			message: /Start the work order before entering values/
		});
		await expectRefused(id, () => perform('tech1', id, 'isolate'), {
			status: 409,
			message: /Planned: steps are signed while it is in progress/
		});
	});

	it('a technician who is not assigned cannot start it: 403, audited (AT7)', async () => {
		await expectRefused(id, () => start('tech2', id), {
			status: 403,
			message: /You are not assigned to this work order: the Planner assigns it/,
			audit: { action: 'auth.access_denied', rule: 'assigned' }
		});
	});

	it('an assigned technician without training cannot start it (AC4): 403, audited', async () => {
		await expectRefused(id, () => start('tech3', id), {
			status: 403,
			message:
				/You are not currently qualified on MP-DV-01: your training record has lapsed or is missing/,
			audit: { action: 'auth.access_denied', rule: 'qualified' }
		});
	});

	it('a Planner cannot start work: 403, audited (AC1)', async () => {
		await expectRefused(id, () => start('planner', id), {
			status: 403,
			message: /Your roles do not allow you to start this work order/,
			audit: { action: 'auth.access_denied' }
		});
	});

	it('a stale expected version → 409, and the equipment stays In service', async () => {
		await expectRefused(
			id,
			async () => work.startWorkOrder(people.tech1!, id, (await seenOf(id)) + 1, ip),
			{ status: 409, message: /changed since you opened it/ }
		);
		expect((await view(id)).equipment.status.status).toBe('in_service');
	});

	it('started: it can no longer be cancelled or started again (409)', async () => {
		await start('tech1', id);
		expect((await view(id)).status).toBe('in_progress');
		await expectRefused(
			id,
			async () => work.cancelWorkOrder(planner(), id, 'Not needed', await seenOf(id), ip),
			{ status: 409, message: /cancelled only before execution starts; this one is In progress/ }
		);
		await expectRefused(id, () => start('tech1', id), {
			status: 409,
			message: /In progress: only planned work can start/
		});
	});

	it('other work on the same equipment cannot start while it is Out of service (409)', async () => {
		const other = await newJob('XV-3104', ['tech1']);
		await expectRefused([other, id], () => start('tech1', other), {
			status: 409,
			message: /XV-3104 is Out of service under other work: that work must be released first/
		});
		expect((await view(other)).status).toBe('planned');
	});

	it('a technician who is not assigned cannot enter values: 403, audited (AT7)', async () => {
		await expectRefused(id, () => save('tech2', id, 'isolate', values.isolate!), {
			status: 403,
			message: /not assigned to this work order/,
			audit: { action: 'auth.access_denied', rule: 'assigned' }
		});
	});

	it('an assigned technician without a current qualification cannot enter values (AC4): 403, audited', async () => {
		await expectRefused(id, () => save('tech3', id, 'isolate', values.isolate!), {
			status: 403,
			message: /not currently qualified on MP-DV-01/,
			audit: { action: 'auth.access_denied', rule: 'qualified' }
		});
	});

	it('"performed at" in the future is refused (DI1)', async () => {
		const e = await expectRefused(
			id,
			() =>
				save('tech1', id, 'isolate', values.isolate!, {
					performedAt: new Date(Date.now() + 10 * 60_000)
				}),
			{ status: 400, field: 'performedAt', message: /“Performed at” cannot be in the future/ }
		);
		expect(Object.keys(e.fields!)).toEqual(['performedAt']);
	});

	it('"performed at" more than 15 minutes back without a reason → 422 (DI1)', async () => {
		for (const lateReason of ['', '  '])
			await expectRefused(
				id,
				() =>
					save('tech1', id, 'isolate', values.isolate!, {
						performedAt: new Date(Date.now() - 20 * 60_000),
						lateReason
					}),
				{
					status: 422,
					field: 'lateReason',
					message: /more than 15 minutes ago: say why the entry is late/
				}
			);
	});

	it('"performed at" before the work order was started is refused', async () => {
		await expectRefused(
			id,
			() =>
				save('tech1', id, 'isolate', values.isolate!, {
					performedAt: new Date(Date.now() - 5 * 60_000)
				}),
			{ status: 400, field: 'performedAt', message: /cannot be before the work order was started/ }
		);
	});

	it('values that do not parse are refused, field by field, and nothing of the step is stored', async () => {
		const e = await expectRefused(
			id,
			() =>
				save('tech1', id, 'isolate', {
					'loto-permit': 'LP-0042',
					depressurised: 'maybe',
					'surface-temperature': '31.5'
				}),
			{ status: 400, message: /Choose pass or fail/ }
		);
		expect(e.fields).toEqual({
			depressurised: 'Choose pass or fail.',
			'surface-temperature': 'Enter a whole number: the procedure records no decimals.'
		});
		await expectRefused(id, () => save('tech1', id, 'isolate', { 'surface-temperature': 'warm' }), {
			status: 400,
			message: /Enter a number in °C/
		});
	});

	it('a save with nothing entered → 400', async () => {
		await expectRefused(id, () => save('tech1', id, 'isolate', {}), {
			status: 400,
			message: /Nothing new to save on this step/
		});
	});

	it('a stale expected version of the step → 409', async () => {
		await expectRefused(
			id,
			async () =>
				work.saveStep(
					people.tech1!,
					id,
					'isolate',
					{
						values: values.isolate!,
						reasons: {},
						deviations: {},
						performedAt: null,
						lateReason: '',
						seen: (await stepSeen(id, 'isolate')) + 1
					},
					ip
				),
			{ status: 409, message: /This step changed since you opened it/ }
		);
	});

	it('signing a step with nothing entered, or with a required value missing → 409', async () => {
		await expectRefused(id, () => perform('tech1', id, 'isolate'), {
			status: 409,
			message: /Enter and save the step’s values before signing it/
		});
		await save('tech1', id, 'isolate', { 'loto-permit': 'LP-0042', 'surface-temperature': '13' });
		await expectRefused(id, () => perform('tech1', id, 'isolate'), {
			status: 409,
			message: /Still to enter: Line section drained and at zero gauge pressure\./
		});
	});

	it('a correction without a reason → 422 (AT2); the first value stays the one in force', async () => {
		for (const reason of ['', '   '])
			await expectRefused(
				id,
				() =>
					save('tech1', id, 'isolate', values.isolate!, {
						reasons: { 'surface-temperature': reason }
					}),
				{
					status: 422,
					field: 'reason:surface-temperature',
					message: /This changes a saved value: give the reason for the correction/
				}
			);
		const v = await view(id);
		expect(v.entries.find((e) => e.fieldKey === 'surface-temperature')!.value).toEqual({
			number: 13,
			unit: '°C'
		});
		// depressurised was new in that save: refused with the correction, so it is still missing.
		expect(v.steps[0]!.status.missing).toEqual(['depressurised']);
	});

	it('verifying a step before it is performed → 409 (SE11)', async () => {
		await save('tech1', id, 'isolate', values.isolate!, {
			reasons: { 'surface-temperature': 'Typing error at entry' }
		});
		await expectRefused(id, () => verify('tech2', id, 'isolate'), {
			status: 409,
			message: /not signed Performed yet: it is verified after it is performed/
		});
	});

	it('signing with a wrong password → 401, audited as a failed signing, counted (ES4, ES7)', async () => {
		const e = await expectRefused(id, () => perform('tech1', id, 'isolate', wrong), {
			status: 401,
			message: /That is not your password. The signature was not made/,
			audit: { action: 'signature.failed', reason: 'wrong_password' }
		});
		expect(e.code).toBe('password');
		const [a] = await t.ownerSql`select failed_sign_ins from accounts where username = 'tech1'`;
		expect(a!.failed_sign_ins).toBe(1);
	});

	it('signing a step with a stale expected version → 409', async () => {
		await expectRefused(
			id,
			async () =>
				work.performStep(people.tech1!, id, 'isolate', pw, (await stepSeen(id, 'isolate')) - 1, ip),
			{ status: 409, message: /This step changed since you opened it/ }
		);
	});

	it('two signings of the same step with the same expected version: one is signed, the other gets 409', async () => {
		const before = await rowsOf(id);
		const seen = await stepSeen(id, 'isolate');
		const results = await Promise.allSettled([
			work.performStep(people.tech1!, id, 'isolate', pw, seen, ip),
			work.performStep(people.tech1!, id, 'isolate', pw, seen, ip)
		]);
		expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
		const lost = results.find((r) => r.status === 'rejected') as PromiseRejectedResult;
		expect((lost.reason as Refusal).status).toBe(409);
		expect((lost.reason as Refusal).message).toMatch(/changed since you opened it|already signed/);
		const after = await rowsOf(id);
		expect(after.signoffs).toBe(before.signoffs + 1);
		expect(after.signatures).toBe(before.signatures + 1);
		expect(await stepState(id, 'isolate')).toBe('performed');
	});

	it('signing a performed step Performed again → 409', async () => {
		await expectRefused(id, () => perform('tech1', id, 'isolate'), {
			status: 409,
			message: /already signed Performed/
		});
	});

	it('the performer cannot verify their own step (ES8): 403, audited as a refused signature', async () => {
		await expectRefused(id, () => verify('tech1', id, 'isolate'), {
			status: 403,
			message: /You performed or entered this step: a second person must verify it/,
			audit: { action: 'signature.refused', reason: 'verifier_is_performer' }
		});
	});

	it('the database refuses a Verified signoff by the step’s performer, whatever writes it (ES8)', async () => {
		const before = await rowsOf(id);
		const e = await refusal(
			t.ownerSql`insert into step_signoffs (id, work_order_id, step_key, kind, signature_id,
				recorded_by, recorded_by_name, recorded_at, audit_seq)
				values (gen_random_uuid(), ${id}, 'isolate', 'verified', gen_random_uuid(),
				${people.tech1!.id}, ${people.tech1!.name}, now(), 0)`
		);
		expect(e.message).toMatch(/the verifier of a step must not be its performer/);
		expect(await rowsOf(id)).toEqual(before);
	});

	it('a verifier without training cannot verify (AC4): 403, audited', async () => {
		await expectRefused(id, () => verify('tech3', id, 'isolate'), {
			status: 403,
			message: /not currently qualified on MP-DV-01, so you cannot verify its steps/,
			audit: { action: 'auth.access_denied', rule: 'qualified' }
		});
	});

	it('a Planner or Quality-only person cannot verify (AC1): 403, audited', async () => {
		for (const who of ['planner', 'quality'])
			await expectRefused(id, () => verify(who, id, 'isolate'), {
				status: 403,
				message: /Your roles do not allow you to verify steps/,
				audit: { action: 'auth.access_denied' }
			});
	});

	it('verifying with a wrong password → 401, audited; with a stale version → 409', async () => {
		await expectRefused(id, () => verify('tech2', id, 'isolate', wrong), {
			status: 401,
			message: /not your password/,
			audit: { action: 'signature.failed', reason: 'wrong_password' }
		});
		await expectRefused(
			id,
			async () =>
				work.verifyStep(people.tech2!, id, 'isolate', pw, (await stepSeen(id, 'isolate')) + 1, ip),
			{ status: 409, message: /This step changed since you opened it/ }
		);
	});

	it('returning a step: a blank reason → 422 (AT2); a stale version → 409; by its performer → 403, audited', async () => {
		await expectRefused(
			id,
			async () =>
				work.returnStep(people.tech2!, id, 'isolate', '  ', await stepSeen(id, 'isolate'), ip),
			{ status: 422, field: 'reason', message: /Give a reason/ }
		);
		await expectRefused(
			id,
			async () =>
				work.returnStep(
					people.tech2!,
					id,
					'isolate',
					'Please check the permit number',
					(await stepSeen(id, 'isolate')) + 1,
					ip
				),
			{ status: 409, message: /This step changed since you opened it/ }
		);
		await expectRefused(
			id,
			async () =>
				work.returnStep(
					people.tech1!,
					id,
					'isolate',
					'Please check the permit number',
					await stepSeen(id, 'isolate'),
					ip
				),
			{
				status: 403,
				message: /a second person must verify it/,
				audit: { action: 'signature.refused', reason: 'verifier_is_performer' }
			}
		);
	});

	it('once verified: verified again → 409; a correction before Quality returns the record → 409', async () => {
		await verify('tech2', id, 'isolate');
		await expectRefused(id, () => verify('tech2', id, 'isolate'), {
			status: 409,
			message: /already verified/
		});
		await expectRefused(
			id,
			() =>
				save(
					'tech1',
					id,
					'isolate',
					{ ...values.isolate!, 'loto-permit': 'LP-0043' },
					{
						reasons: { 'loto-permit': 'Wrong permit' }
					}
				),
			{
				status: 409,
				message: /This step is verified: it can be corrected only after Quality returns/
			}
		);
	});

	it('a late entry with its reason is accepted, and the reason is stored (DI1)', async () => {
		// The server's clock is moved 20 minutes on: the work was done now, the entry is made later.
		const performedAt = new Date();
		vi.useFakeTimers({ toFake: ['Date'] });
		vi.setSystemTime(performedAt.getTime() + 20 * 60_000);
		try {
			await save('tech1', id, 'as-found', values['as-found']!, {
				performedAt,
				lateReason: 'Written up after the job: no signal in the clean room.'
			});
		} finally {
			vi.useRealTimers();
		}
		const rows = await t.ownerSql`select late_reason, performed_at from step_entries
			where work_order_id = ${id} and step_key = 'as-found'`;
		expect(rows).toHaveLength(1);
		expect(rows[0]!.late_reason).toBe('Written up after the job: no signal in the clean room.');
		expect(new Date(rows[0]!.performed_at).getTime()).toBe(performedAt.getTime());
		const [event] = await t.ownerSql`select new_values->>'lateReason' as late from audit_event
			where action = 'work_order.entry' and entity_id = ${id} and new_values->>'step' = 'as-found'`;
		expect(event!.late).toBe('Written up after the job: no signal in the clean room.');
	});

	it('an instrument of the wrong kind, out of calibration, withdrawn, never calibrated or unknown is refused (MR3)', async () => {
		const cases: [string, RegExp][] = [
			[await instrumentOf('TW-01'), /This step needs a caliper; TW-01 is a torque wrench/],
			[await instrumentOf('PG-01'), /This step needs a caliper; PG-01 is a pressure gauge/],
			[await instrumentOf('CA-07'), /CA-07 cannot be used on .*: its calibration has expired/],
			[await instrumentOf('CA-08'), /CA-08 cannot be used on .*: it is withdrawn from use/],
			[await instrumentOf('CA-09'), /CA-09 cannot be used on .*: it has no valid calibration/],
			['00000000-0000-4000-8000-000000000002', /Choose an instrument from the list/],
			['CA-01', /Choose the instrument from the list/]
		];
		for (const [instrument, message] of cases) {
			// The good number beside it is not stored either.
			const e = await expectRefused(
				id,
				() =>
					save('tech1', id, 'limiter-before', {
						'limiter-instrument': instrument,
						'limiter-as-found': '12.5'
					}),
				{ status: 400, message }
			);
			expect(Object.keys(e.fields!)).toEqual(['limiter-instrument']);
		}
	});

	it('two saves of the same step with the same expected version: exactly one is stored, the other gets 409', async () => {
		const before = await rowsOf(id);
		const seen = await stepSeen(id, 'limiter-before');
		const input = (n: string) => ({
			values: {
				'limiter-instrument': values['limiter-before']!['limiter-instrument']!,
				'limiter-as-found': n
			},
			reasons: {},
			deviations: {},
			performedAt: null,
			lateReason: '',
			seen
		});
		const results = await Promise.allSettled([
			work.saveStep(people.tech1!, id, 'limiter-before', input('12.5'), ip),
			work.saveStep(people.techqa!, id, 'limiter-before', input('12.6'), ip)
		]);
		expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
		const lost = results.find((r) => r.status === 'rejected') as PromiseRejectedResult;
		expect((lost.reason as Refusal).status).toBe(409);
		expect((lost.reason as Refusal).message).toMatch(/This step changed since you opened it/);
		expect((await rowsOf(id)).entries).toBe(before.entries + 2);
	});

	it('signing out of the procedure’s order → 409 (SE11)', async () => {
		// Step 2 (as-found) is entered but not signed; step 3 is complete.
		expect(await stepState(id, 'as-found')).toBe('entered');
		const performer = (await view(id)).entries.find((e) => e.stepKey === 'limiter-before')!;
		const who = performer.recordedBy === people.tech1!.id ? 'tech1' : 'techqa';
		await expectRefused(id, () => perform(who, id, 'limiter-before'), {
			status: 409,
			message:
				/Steps are signed in the procedure’s order: sign step 2 \(Record the as-found condition\) first/
		});
	});

	it('a value outside its limits without a description of the deviation → 422 (DI3)', async () => {
		await perform('tech1', id, 'as-found');
		await perform('tech1', id, 'limiter-before');
		await save('tech1', id, 'actuator', values.actuator!);
		await perform('tech1', id, 'actuator');
		for (const description of ['', ' '])
			await expectRefused(
				id,
				() =>
					save(
						'tech1',
						id,
						'fasteners',
						{ 'fasteners-replaced': '30' },
						{
							deviations: { 'fasteners-replaced': description }
						}
					),
				{
					status: 422,
					field: 'deviation:fasteners-replaced',
					message: /outside its limits: describe what you found/
				}
			);
		expect((await rowsOf(id)).deviations).toBe(0);
	});

	it('a lot of the wrong material, an expired lot or a lot not received here is refused (MR3)', async () => {
		for (const key of ['fasteners', 'seat']) {
			await save('tech1', id, key, values[key]!);
			await perform('tech1', id, key);
		}
		const cases: [string, RegExp][] = [
			[
				await lotOf('DIA-025-PT', 'P25-2201'),
				/Wrong part: DIA-025-PT is material DM-PTFE-2P, XV-3104 needs DM-EPDM-70\. Do not fit it/
			],
			[
				await lotOf('DIA-025-EP', 'L23-0955'),
				/Lot L23-0955 expired on \d{4}-\d{2}-\d{2}: do not fit it/
			],
			['00000000-0000-4000-8000-000000000003', /Choose a lot received at this site/],
			['L25-0412', /Choose the lot from the list/]
		];
		for (const [lot, message] of cases)
			await expectRefused(id, () => save('techqa', id, 'new-diaphragm', { 'diaphragm-lot': lot }), {
				status: 400,
				field: 'diaphragm-lot',
				message
			});
	});

	it('someone who entered a step’s value cannot verify it, though another signed it (ES8): 403, audited', async () => {
		await save('techqa', id, 'new-diaphragm', values['new-diaphragm']!);
		await perform('tech1', id, 'new-diaphragm');
		await expectRefused(id, () => verify('techqa', id, 'new-diaphragm'), {
			status: 403,
			message: /You performed or entered this step/,
			audit: { action: 'signature.refused', reason: 'verifier_is_performer' }
		});
		await verify('tech2', id, 'new-diaphragm');
	});

	it('verifying a step that asks for no verification → 409', async () => {
		await expectRefused(id, () => verify('tech2', id, 'seat'), {
			status: 409,
			message: /does not ask for a second-person verification/
		});
	});

	it('with a step not verified: Executed → 409, and release → 409 naming it (MR4)', async () => {
		for (const key of ['reassemble', 'tighten', 'limiter-after', 'flow-check', 'return']) {
			await save('tech1', id, key, values[key]!);
			await perform('tech1', id, key);
		}
		await expectRefused(id, () => complete('tech1', id), {
			status: 409,
			message:
				/Not every step is done: step 11 \(Check the flow with a calibrated reference instrument\) is performed and needs verification/
		});
		const e = await expectRefused(id, () => release('quality', id), {
			status: 409,
			message: /It cannot be released yet: The work order is In progress, not Executed\./
		});
		expect(e.message).toMatch(
			/Step 11 \(Check the flow with a calibrated reference instrument\) is performed and not verified/
		);
		await expectRefused(id, () => review('quality', id), {
			status: 409,
			message: /The trail is reviewed once the work is executed/
		});
	});

	it('Quality cannot return a record that is not executed (409)', async () => {
		await expectRefused(
			id,
			async () =>
				work.returnWorkOrder(people.quality!, id, 'Check the flow', pw, await seenOf(id), ip),
			{ status: 409, message: /Only an executed work order can be returned/ }
		);
	});

	it('the application role cannot change or delete entries; the owner is stopped by the trigger (DI4)', async () => {
		const before = await rowsOf(id);
		const u = await refusal(
			t.appSql`update step_entries set reason = 'x' where work_order_id = ${id}`
		);
		expect(u.message).toMatch(/permission denied/);
		const d = await refusal(t.appSql`delete from step_entries where work_order_id = ${id}`);
		expect(d.message).toMatch(/permission denied/);
		const o = await refusal(
			t.ownerSql`update step_entries set reason = 'x' where work_order_id = ${id}`
		);
		expect(o.message).toMatch(/UPDATE on step_entries is not allowed: records are append-only/);
		expect(await rowsOf(id)).toEqual(before);
	});
});

// ── Qualification lapsed (tech2 on MP-PU-01) ──────────────────────────────────

describe('a lapsed qualification (AC4)', () => {
	it('tech2, assigned, cannot start pump work: 403, audited', async () => {
		const id = await newJob('P-3101', ['tech2'], 'MP-PU-01');
		await expectRefused(id, () => start('tech2', id), {
			status: 403,
			message: /not currently qualified on MP-PU-01: your training record has lapsed or is missing/,
			audit: { action: 'auth.access_denied', rule: 'qualified' }
		});
		expect((await view(id)).equipment.status.status).toBe('in_service');
	});

	describe('on work another started', () => {
		let id: string;
		beforeAll(async () => {
			id = await newJob('P-3102', ['techqa', 'tech2'], 'MP-PU-01');
			await start('techqa', id);
			await save('techqa', id, 'isolate', { 'loto-permit': 'LP-0077' });
		});

		it('cannot enter values: 403, audited', async () => {
			await expectRefused(id, () => save('tech2', id, 'inspect', { 'seal-condition': 'Good' }), {
				status: 403,
				message: /not currently qualified on MP-PU-01/,
				audit: { action: 'auth.access_denied', rule: 'qualified' }
			});
		});

		it('cannot verify: 403, audited', async () => {
			await perform('techqa', id, 'isolate');
			await expectRefused(id, () => verify('tech2', id, 'isolate'), {
				status: 403,
				message: /not currently qualified on MP-PU-01, so you cannot verify its steps/,
				audit: { action: 'auth.access_denied', rule: 'qualified' }
			});
		});

		it('cannot sign a step Performed: 403, audited', async () => {
			await save('techqa', id, 'inspect', { 'seal-condition': 'Good' });
			await expectRefused(id, () => perform('tech2', id, 'inspect'), {
				status: 403,
				message: /not currently qualified on MP-PU-01/,
				audit: { action: 'auth.access_denied', rule: 'qualified' }
			});
		});

		it('the performer cannot release it (ES8): 403, audited', async () => {
			await expectRefused(id, () => release('techqa', id), {
				status: 403,
				message: /You took part in this work/,
				audit: { action: 'signature.refused', reason: 'reviewer_took_part' }
			});
		});
	});
});

// ── Quality ──────────────────────────────────────────────────────────────────

describe('Quality refusals on an executed job with a deviation (XV-3103)', () => {
	let id: string;
	let deviationId: string;
	beforeAll(async () => {
		// tech1 performs everything, techqa verifies the new diaphragm, tech2 the rest; low flow.
		id = await newJob('XV-3103', ['tech1', 'techqa']);
		await start('tech1', id);
		const values = await goodValues();
		for (const key of Object.keys(values)) {
			if (key === 'flow-check')
				await save(
					'tech1',
					id,
					key,
					{ ...values[key]!, flow: '35.0' },
					{
						deviations: { flow: 'Flow 35 L/min below the 40 L/min minimum; line pressure low.' }
					}
				);
			else await save('tech1', id, key, values[key]!);
			await perform('tech1', id, key);
			if (verifiedSteps.includes(key))
				await verify(key === 'new-diaphragm' ? 'techqa' : 'tech2', id, key);
		}
		deviationId = (await view(id)).deviations[0]!.id;
	});

	it('signing it Executed: a wrong password → 401, audited; a stale version → 409; an unassigned technician → 403', async () => {
		await expectRefused(id, () => complete('tech1', id, wrong), {
			status: 401,
			message: /not your password/,
			audit: { action: 'signature.failed', reason: 'wrong_password' }
		});
		await expectRefused(
			id,
			async () => work.completeExecution(people.tech1!, id, pw, (await seenOf(id)) - 1, ip),
			{ status: 409, message: /changed since you opened it/ }
		);
		await expectRefused(id, () => complete('tech2', id), {
			status: 403,
			message: /not assigned to this work order/,
			audit: { action: 'auth.access_denied', rule: 'assigned' }
		});
		await complete('tech1', id);
		expect((await view(id)).status).toBe('executed');
	});

	it('executed: no more values, step signatures, Executed signatures or plan changes (409)', async () => {
		await expectRefused(
			id,
			() =>
				save(
					'tech1',
					id,
					'return',
					{ 'locks-removed': 'fail' },
					{
						reasons: { 'locks-removed': 'Late finding' },
						deviations: { 'locks-removed': 'A lock was still on.' }
					}
				),
			{ status: 409, message: /Executed: values can no longer be entered/ }
		);
		await expectRefused(id, () => perform('tech1', id, 'return'), {
			status: 409,
			message: /Executed: steps are signed while it is in progress/
		});
		await expectRefused(id, () => complete('tech1', id), {
			status: 409,
			message: /This work order is Executed/
		});
		await expectRefused(
			id,
			async () =>
				work.changePlan(
					planner(),
					id,
					{ dueOn: today, priority: 'routine', assignees: [], notes: '' },
					'Clean up',
					await seenOf(id),
					ip
				),
			{ status: 409, message: /The plan of executed or closed work cannot change/ }
		);
	});

	it('release with an open deviation and no trail review → 409 naming both (AT5, MR4)', async () => {
		const e = await expectRefused(id, () => release('quality', id), {
			status: 409,
			message: /Deviation DEV-\d{4}-\d{4} is open: disposition it first/
		});
		expect(e.message).toMatch(/The review of the record’s audit trail is not recorded yet/);
	});

	it('a verifier of its steps cannot release it, review its trail or disposition its deviation (ES8, AT6): 403, audited', async () => {
		await expectRefused(id, () => release('techqa', id), {
			status: 403,
			message: /You took part in this work/,
			audit: { action: 'signature.refused', reason: 'reviewer_took_part' }
		});
		await expectRefused(id, () => review('techqa', id), {
			status: 403,
			message: /someone independent of the work must do this/,
			audit: { action: 'signature.refused', reason: 'reviewer_took_part' }
		});
		await expectRefused(
			id,
			async () =>
				work.dispositionDeviation(
					people.techqa!,
					id,
					deviationId,
					'accepted',
					'No impact.',
					pw,
					await seenOf(id),
					ip
				),
			{
				status: 403,
				message: /someone independent of the work must do this/,
				audit: { action: 'signature.refused', reason: 'reviewer_took_part' },
				auditOn: [deviationId]
			}
		);
	});

	it('a performer without the Quality role cannot review, release or return it (AC1): 403, audited', async () => {
		await expectRefused(id, () => review('tech1', id), {
			status: 403,
			message: /Your roles do not allow you to review work orders/,
			audit: { action: 'auth.access_denied' }
		});
		await expectRefused(id, () => release('tech1', id), {
			status: 403,
			message: /Your roles do not allow you to release work orders/,
			audit: { action: 'auth.access_denied' }
		});
		await expectRefused(
			id,
			async () => work.returnWorkOrder(people.tech1!, id, 'Recheck flow', pw, await seenOf(id), ip),
			{
				status: 403,
				message: /Your roles do not allow you to return work orders/,
				audit: { action: 'auth.access_denied' }
			}
		);
	});

	it('an administrator cannot release it (AC3)', async () => {
		await expectRefused(id, () => release('admin', id), {
			status: 403,
			message: /Your roles do not allow you to release work orders/,
			audit: { action: 'auth.access_denied' }
		});
	});

	it('the trail review: a wrong password → 401, audited; a stale version → 409', async () => {
		await expectRefused(id, () => review('quality', id, wrong), {
			status: 401,
			message: /not your password/,
			audit: { action: 'signature.failed', reason: 'wrong_password' }
		});
		await expectRefused(
			id,
			async () => work.reviewTrail(people.quality!, id, pw, (await seenOf(id)) + 1, ip),
			{ status: 409, message: /changed since you opened it/ }
		);
	});

	it('a disposition: blank → 422 (AT2); a wrong password → 401, audited', async () => {
		await expectRefused(
			id,
			async () =>
				work.dispositionDeviation(
					people.quality!,
					id,
					deviationId,
					'accepted',
					'  ',
					pw,
					await seenOf(id),
					ip
				),
			{ status: 422, field: 'text', message: /Write the disposition: what was decided and why/ }
		);
		await expectRefused(
			id,
			async () =>
				work.dispositionDeviation(
					people.quality!,
					id,
					deviationId,
					'accepted',
					'No impact.',
					wrong,
					await seenOf(id),
					ip
				),
			{
				status: 401,
				message: /not your password/,
				audit: { action: 'signature.failed', reason: 'wrong_password' },
				auditOn: [deviationId]
			}
		);
	});

	it('returning the record: a blank reason → 422 (AT2); a stale version → 409', async () => {
		await expectRefused(
			id,
			async () => work.returnWorkOrder(people.quality!, id, ' ', pw, await seenOf(id), ip),
			{ status: 422, field: 'reason', message: /Give a reason/ }
		);
		await expectRefused(
			id,
			async () =>
				work.returnWorkOrder(people.quality!, id, 'Recheck flow', pw, (await seenOf(id)) - 1, ip),
			{ status: 409, message: /changed since you opened it/ }
		);
	});

	it('after the trail review: reviewed again → 409; release still refused for the open deviation', async () => {
		await review('quality', id);
		await expectRefused(id, () => review('quality', id), {
			status: 409,
			message: /The trail review is already recorded/
		});
		const e = await expectRefused(id, () => release('quality', id), {
			status: 409,
			message: /Deviation DEV-\d{4}-\d{4} is open/
		});
		expect(e.message).not.toMatch(/audit trail/);
	});

	it('dispositioned: dispositioned again → 409', async () => {
		await work.dispositionDeviation(
			people.quality!,
			id,
			deviationId,
			'accepted',
			'Flow measured at low line pressure; repeated at nominal pressure, no impact.',
			pw,
			await seenOf(id),
			ip
		);
		await expectRefused(
			id,
			async () =>
				work.dispositionDeviation(
					people.quality!,
					id,
					deviationId,
					'capa',
					'Second thoughts.',
					pw,
					await seenOf(id),
					ip
				),
			{ status: 409, message: /already dispositioned/ }
		);
	});

	it('release: a wrong password → 401, audited; a stale version → 409; then released, and not again', async () => {
		await expectRefused(id, () => release('quality', id, wrong), {
			status: 401,
			message: /not your password/,
			audit: { action: 'signature.failed', reason: 'wrong_password' }
		});
		await expectRefused(
			id,
			async () => work.releaseWorkOrder(people.quality!, id, pw, (await seenOf(id)) - 1, ip),
			{ status: 409, message: /changed since you opened it/ }
		);
		await release('quality', id);
		const v = await view(id);
		expect(v.status).toBe('released');
		expect(v.equipment.status.status).toBe('in_service');
		await expectRefused(id, () => release('quality', id), {
			status: 409,
			message: /The work order is Released, not Executed/
		});
		await expectRefused(
			id,
			async () => work.returnWorkOrder(people.quality!, id, 'Late doubt', pw, await seenOf(id), ip),
			{ status: 409, message: /Only an executed work order can be returned/ }
		);
	});
});

describe('the person who signed the work Executed is not independent of it (ES8, AT6)', () => {
	let id: string;
	beforeAll(async () => {
		// tech1 performs every step and tech2 verifies; techqa (technician and Quality) signs Executed.
		id = await executedJob('XV-4205', { executor: 'techqa' });
	});

	// Found by this test and fixed: the Executed signer (and the starter) counts as taking part.
	it('they cannot review the trail: 403, audited', async () => {
		await expectRefused(id, () => review('techqa', id), {
			status: 403,
			message: /someone independent of the work must do this/,
			audit: { action: 'signature.refused', reason: 'reviewer_took_part' }
		});
	});
});

// ── Concurrency of a refusal that depends on another record ─────────────────

describe('two work orders on the same equipment started at the same moment', () => {
	// Found by this test and fixed: startWorkOrder takes the equipment's lock before reading its status.
	it('only one starts; the other gets 409 (equipment under other work)', async () => {
		const a = await newJob('XV-3105', ['tech1']);
		const b = await newJob('XV-3105', ['tech1']);
		const seenA = await seenOf(a);
		const seenB = await seenOf(b);
		// Another writer holds the audit chain for a moment, as a busy plant does: both starts queue.
		let letGo!: () => void;
		const held = new Promise<void>((resolve) => (letGo = resolve));
		let holding!: () => void;
		const holds = new Promise<void>((resolve) => (holding = resolve));
		const holder = t.ownerSql.begin(async (sql) => {
			await sql`select seq from audit_chain_head where id = 1 for update`;
			holding();
			await held;
		});
		await holds;
		const starts = Promise.allSettled([
			work.startWorkOrder(people.tech1!, a, seenA, ip),
			work.startWorkOrder(people.tech1!, b, seenB, ip)
		]);
		await new Promise((resolve) => setTimeout(resolve, 1500));
		letGo();
		await holder;
		const results = await starts;
		const statuses = [(await view(a)).status, (await view(b)).status].sort();
		expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
		const lost = results.find((r) => r.status === 'rejected') as PromiseRejectedResult;
		expect((lost.reason as Refusal).status).toBe(409);
		expect(statuses).toEqual(['in_progress', 'planned']);
	});
});

// ── Gaps found in a code review and closed ───────────────────────────────────

describe('review findings: a refusal for each gap that was closed', () => {
	let a: string;
	let b: string;
	beforeAll(async () => {
		a = await executedJob('XV-3102', { lowFlow: true });
		b = await executedJob('XV-3108', { lowFlow: true });
	});

	it('a deviation is dispositioned only on its own work order: another one answers 404 (AC1)', async () => {
		const deviationOfB = (await view(b)).deviations[0]!.id;
		await expectRefused(
			[a, b],
			() =>
				work
					.dispositionDeviation(
						people.quality!,
						a,
						deviationOfB,
						'accepted',
						'No impact.',
						pw,
						0,
						ip
					)
					.then(async () => undefined),
			{ status: 404, message: /No such deviation on this work order/ }
		);
	});

	it('a disposition over a record that changed since it was shown answers 409', async () => {
		const v = await view(a);
		await expectRefused(
			a,
			() =>
				work.dispositionDeviation(
					people.quality!,
					a,
					v.deviations[0]!.id,
					'accepted',
					'No impact.',
					pw,
					v.revision - 1,
					ip
				),
			{ status: 409, message: /changed since you opened it/ }
		);
	});

	it('a trail review over events the reviewer was not shown answers 409 (AT5)', async () => {
		const v = await view(a);
		const last = v.trail.at(-1)!.seq;
		await expectRefused(
			a,
			() => work.reviewTrail(people.quality!, a, pw, v.revision, ip, last - 1),
			{
				status: 409,
				message: /New events were added to this record’s audit trail/
			}
		);
	});

	it('a deviation is not dispositioned while the work is still in progress: 409', async () => {
		const id = await newJob('XV-4206', ['tech1']);
		await start('tech1', id);
		const values = await goodValues();
		await save(
			'tech1',
			id,
			'flow-check',
			{ ...values['flow-check']!, flow: '30.0' },
			{
				deviations: { flow: 'Flow far below its minimum.' }
			}
		);
		const v = await view(id);
		await expectRefused(
			id,
			() =>
				work.dispositionDeviation(
					people.quality!,
					id,
					v.deviations[0]!.id,
					'accepted',
					'No impact.',
					pw,
					v.revision,
					ip
				),
			{ status: 409, message: /once the work is executed/ }
		);
	});

	it('quarantined equipment cannot start work: Quality ends the quarantine first (409)', async () => {
		const tag = 'XV-4201';
		await equipment.changeQuarantine(
			personOf(people.quality!),
			await equipmentId(tag),
			true,
			'Suspected contamination'
		);
		const id = await newJob(tag, ['tech1']);
		await expectRefused(id, () => start('tech1', id), {
			status: 409,
			message: /Quarantined: Quality ends the quarantine/
		});
	});

	it('a technician taken off the plan cannot save on it any more: 403', async () => {
		const id = await newJob('XV-4202', ['tech1', 'techqa']);
		await start('tech1', id);
		const v = await view(id);
		await work.changePlan(
			planner(),
			id,
			{
				dueOn: v.plan.dueOn,
				priority: 'high',
				assignees: [people.techqa!.id],
				notes: v.plan.notes
			},
			'Technician unavailable',
			v.revision
		);
		await expectRefused(id, () => save('tech1', id, 'isolate', { 'loto-permit': 'LP-9' }), {
			status: 403,
			message: /not assigned/
		});
	});
});
