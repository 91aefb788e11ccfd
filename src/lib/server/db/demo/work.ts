import { passesFor } from '../../../calc/tightening';
import { count } from 'drizzle-orm';
import { addDays, siteToday } from '../../../fitness';
import type { Priority, WorkKind } from '../../../work';
import type { User } from '../../auth/guard';
import { db } from '../index';
import * as equipment from '../../equipment';
import * as instruments from '../../instruments';
import * as parts from '../../parts';
import * as procedures from '../../procedures';
import { currentSite } from '../../plant';
import { personOf } from '../../records';
import * as work from '../../work-orders';
import { workOrders } from '../schema/index';
import { demoPerson } from './people';

/**
 * Demo work orders (5/10), one or more in every stage, so that every role's Waiting for me has
 * something: written through the work-order module as the people of the demo plant, with their
 * signatures (the demo password), so that every row has its audit event and every signature
 * matches. Runs after seedDemoMasterData. Idempotent: when any work order exists it does nothing.
 * Values and notes are invented demo data.
 */

export type WorkSeedResult = {
	/** Planned: one unassigned, one assigned and due soon, one overdue. */
	planned: number;
	/** In progress, some steps performed (and the first verified). */
	inProgress: number;
	/** In progress with performed steps waiting for a second person's verification. */
	awaitingVerification: number;
	/** Executed, waiting for Quality's review and release (with an open deviation). */
	executed: number;
	released: number;
	/** Executed, then returned by Quality with a reason: In progress again. */
	returned: number;
	cancelled: number;
};

const none = (): WorkSeedResult => ({
	planned: 0,
	inProgress: 0,
	awaitingVerification: 0,
	executed: 0,
	released: 0,
	returned: 0,
	cancelled: 0
});

const person = demoPerson;

/** The seed runs on the server: its events have no client address (like seedDemoMasterData's). */
const ip = null;

type Values = Record<string, Record<string, string>>;

export async function seedDemoWork(password: string): Promise<WorkSeedResult> {
	const added = none();
	const [existing] = await db().select({ n: count() }).from(workOrders);
	if ((existing?.n ?? 0) > 0) return added;

	const site = await currentSite();
	if (!site) throw new Error('the demo site is missing: seed the plant first');
	const today = siteToday(site.timeZone);
	const day = (offset: number) => addDays(today, offset);

	const planner = await person('planner');
	const tech1 = await person('tech1');
	const tech2 = await person('tech2');
	const quality = await person('quality');

	const procedureId = async (code: string) => {
		const id = await procedures.findProcedureByCode(code);
		if (!id) throw new Error(`demo procedure ${code} is missing: seed the master data first`);
		return id;
	};
	const equipmentId = async (tag: string) => {
		const id = await equipment.findByTag(tag);
		if (!id) throw new Error(`demo equipment ${tag} is missing: seed the master data first`);
		return id;
	};
	const instrumentList = await instruments.listInstruments(site.id, today);
	const instrument = (code: string) => {
		const found = instrumentList.find((i) => i.code === code);
		if (!found) throw new Error(`demo instrument ${code} is missing: seed the master data first`);
		return found.id;
	};
	const partList = await parts.listParts(site.id);
	const lot = async (partNumber: string, supplierLot: string) => {
		const part = partList.find((p) => p.partNumber === partNumber);
		const found =
			part && (await parts.getPart(part.id))?.lots.find((l) => l.supplierLot === supplierLot);
		if (!found) throw new Error(`demo lot ${partNumber} ${supplierLot} is missing`);
		return found.id;
	};

	// ── Helpers over the work-order module, as the app's actions call it ──
	const view = async (id: string) => (await work.getWorkOrder(id))!;
	const stepSeen = async (id: string, key: string) =>
		(await view(id)).steps.find((s) => s.step.key === key)!.status.revision;
	const create = async (
		tag: string,
		code: string,
		plan: {
			kind: WorkKind;
			dueIn: number;
			priority: Priority;
			assignees: User[];
			notes: string;
		}
	) =>
		(
			await work.createWorkOrder(
				personOf(planner),
				{
					kind: plan.kind,
					equipmentId: await equipmentId(tag),
					procedureId: await procedureId(code),
					dueOn: day(plan.dueIn),
					priority: plan.priority,
					assignees: plan.assignees.map((a) => a.id),
					notes: plan.notes
				},
				ip
			)
		).id;
	const start = async (who: User, id: string) =>
		work.startWorkOrder(who, id, (await view(id)).revision, ip);
	const save = async (
		who: User,
		id: string,
		key: string,
		values: Record<string, string>,
		more: { reasons?: Record<string, string>; deviations?: Record<string, string> } = {}
	) => {
		// Guided tightening: the passes are ticked in order first; the wrench goes with the final torque.
		const { wrench, ...entered } = values;
		const wo = await view(id);
		const step = wo.steps.find((s) => s.step.key === key)!.step;
		const wrenches: Record<string, string> = {};
		for (const f of step.fields.filter((f) => f.kind === 'tightening' && entered[f.key])) {
			const plan = passesFor(
				f.pattern,
				Number(wo.attributes.bonnetFasteners),
				Number(wo.attributes.fastenerTorqueNm)
			);
			if (!plan.ok) throw new Error(plan.message);
			for (let n = 1; n <= plan.value.length; n++)
				await work.tickPass(who, id, key, f.key, n, await stepSeen(id, key), ip);
			wrenches[f.key] = wrench!;
		}
		return work.saveStep(
			who,
			id,
			key,
			{
				values: entered,
				wrenches,
				reasons: more.reasons ?? {},
				deviations: more.deviations ?? {},
				performedAt: null,
				lateReason: '',
				seen: await stepSeen(id, key)
			},
			ip
		);
	};
	const perform = async (who: User, id: string, key: string) =>
		work.performStep(who, id, key, password, await stepSeen(id, key), ip);
	const verify = async (who: User, id: string, key: string) =>
		work.verifyStep(who, id, key, password, await stepSeen(id, key), ip);

	/** Values of every step of MP-DV-01 that meet their limits, for a valve fitted from `lotId`. */
	const diaphragmValues = (
		lotId: string,
		permit: string,
		asFound: string,
		torque: number
	): Values => ({
		isolate: { 'loto-permit': permit, depressurised: 'pass', 'surface-temperature': '28' },
		'as-found': { 'as-found-condition': asFound },
		'limiter-before': { 'limiter-instrument': instrument('CA-01'), 'limiter-as-found': '12.5' },
		actuator: { 'actuator-air': 'Opened with control air (spring-to-close)' },
		fasteners: { 'fasteners-replaced': '0' },
		seat: { 'seat-condition': 'Cleaned, undamaged' },
		'new-diaphragm': { 'diaphragm-lot': lotId },
		reassemble: { 'port-orientation': 'pass' },
		tighten: {
			'thickness-instrument': instrument('TG-01'),
			'thickness-before': '4.20',
			'thickness-after': '3.65',
			// The final torque from the valve's data (the passes are ticked by `save`).
			tightening: String(torque),
			wrench: instrument('TW-01')
		},
		'limiter-after': { 'limiter-as-left': '12.5', 'limiter-matches': 'pass' },
		'flow-check': { 'flow-instrument': instrument('FM-01'), flow: '52.0', 'no-leak': 'pass' },
		return: { 'locks-removed': 'pass' }
	});

	/**
	 * Works through the steps in order: tech1 enters the values and signs each step Performed;
	 * tech2 verifies the steps that ask for it (unless `verify` is false). `deviations` describes
	 * the values outside their limits; `until` stops after that step.
	 */
	const execute = async (
		id: string,
		values: Values,
		more: {
			until?: string;
			verify?: boolean;
			deviations?: Record<string, Record<string, string>>;
			/** Steps whose values are saved already. */
			entered?: string[];
		} = {}
	) => {
		const steps = (await view(id)).steps;
		for (const { step } of steps) {
			if (!more.entered?.includes(step.key))
				await save(tech1, id, step.key, values[step.key]!, {
					deviations: more.deviations?.[step.key]
				});
			await perform(tech1, id, step.key);
			if (step.verificationRequired && more.verify !== false) await verify(tech2, id, step.key);
			if (step.key === more.until) return;
		}
	};
	const signExecuted = async (id: string) =>
		work.completeExecution(tech1, id, password, (await view(id)).revision, ip);

	// ── Planned ──
	// Nobody assigned yet: on the Planner's Waiting for me.
	await create('P-3102', 'MP-PU-01', {
		kind: 'preventive',
		dueIn: 12,
		priority: 'routine',
		assignees: [],
		notes: 'Half-yearly seal inspection of the standby loop pump.'
	});
	added.planned++;
	// Assigned to tech1, due in two days: on tech1's Waiting for me.
	await create('XV-3105', 'MP-DV-01', {
		kind: 'preventive',
		dueIn: 2,
		priority: 'routine',
		assignees: [tech1],
		notes: 'Diaphragm due by SIP cycle count. Plan with the loop drain window.'
	});
	added.planned++;
	// Overdue: the due date has passed and it has not started.
	await create('XV-4204', 'MP-DV-01', {
		kind: 'preventive',
		dueIn: -3,
		priority: 'high',
		assignees: [tech2],
		notes: 'Diaphragm due by SIP cycle count; the buffer campaign delayed it.'
	});
	added.planned++;

	// ── In progress: tech1 started; the first steps performed, the first verified ──
	{
		const id = await create('XV-3103', 'MP-DV-01', {
			kind: 'corrective',
			dueIn: 1,
			priority: 'high',
			assignees: [tech1],
			notes: 'Drops at the bonnet reported by the filling suite.'
		});
		await start(tech1, id);
		const values = diaphragmValues(
			await lot('DIA-025-EP', 'L25-0412'),
			'LP-2031',
			'Leak at the bonnet',
			6
		);
		await execute(id, values, { until: 'as-found' });
		// The next step's values are entered, not yet signed.
		await save(tech1, id, 'limiter-before', values['limiter-before']!);
		added.inProgress++;
	}

	// ── In progress, steps performed by tech1 waiting for tech2's verification ──
	{
		const id = await create('XV-3104', 'MP-DV-01', {
			kind: 'preventive',
			dueIn: 0,
			priority: 'routine',
			assignees: [tech1],
			notes: 'Diaphragm due by SIP cycle count.'
		});
		await start(tech1, id);
		const values = diaphragmValues(
			await lot('DIA-025-EP', 'L25-0412'),
			'LP-2032',
			'No defect seen',
			6
		);
		await execute(id, values, { until: 'new-diaphragm', verify: false });
		added.awaitingVerification++;
	}

	// ── Executed, waiting for Quality: an open deviation from a flow below its minimum ──
	{
		const id = await create('XV-3101', 'MP-DV-01', {
			kind: 'corrective',
			dueIn: -1,
			priority: 'urgent',
			assignees: [tech1],
			notes: 'Seat leak seen during the last loop sanitisation.'
		});
		await start(tech1, id);
		const values = diaphragmValues(
			await lot('DIA-040-EP', 'L25-0630'),
			'LP-2027',
			'Leak through the seat',
			10
		);
		values['flow-check'] = { ...values['flow-check']!, flow: '36.5' };
		await execute(id, values, {
			deviations: {
				'flow-check': {
					flow: 'Flow 36.5 L/min, below the 40 L/min minimum. Loop pressure was low at the time of the check.'
				}
			}
		});
		await signExecuted(id);
		added.executed++;
	}

	// ── Released: the whole job, one value corrected, verified, reviewed and released ──
	{
		const id = await create('XV-4205', 'MP-DV-01', {
			kind: 'preventive',
			dueIn: -6,
			priority: 'routine',
			assignees: [tech1],
			notes: 'Diaphragm due by SIP cycle count.'
		});
		await start(tech1, id);
		const values = diaphragmValues(
			await lot('DIA-040-EP', 'L25-0630'),
			'LP-2019',
			'No defect seen',
			10
		);
		// A typing error first, corrected with its reason: the old entry stays in the record.
		await save(tech1, id, 'isolate', { ...values.isolate!, 'surface-temperature': '18' });
		await save(tech1, id, 'isolate', values.isolate!, {
			reasons: { 'surface-temperature': 'Typing error at entry: the gauge read 28 °C.' }
		});
		await execute(id, values, { entered: ['isolate'] });
		await signExecuted(id);
		await work.reviewTrail(quality, id, password, (await view(id)).revision, ip);
		await work.releaseWorkOrder(quality, id, password, (await view(id)).revision, ip);
		added.released++;
	}

	// ── Returned: executed, then Quality returned it for a correction ──
	{
		const id = await create('XV-3102', 'MP-DV-01', {
			kind: 'preventive',
			dueIn: -2,
			priority: 'routine',
			assignees: [tech1],
			notes: 'Diaphragm due by SIP cycle count.'
		});
		await start(tech1, id);
		const values = diaphragmValues(
			await lot('DIA-040-EP', 'L25-0630'),
			'LP-2024',
			'No defect seen',
			10
		);
		await execute(id, values);
		await signExecuted(id);
		await work.returnWorkOrder(
			quality,
			id,
			'The lockout/tagout permit number does not match the permit log for that day: check it and correct the entry.',
			password,
			(await view(id)).revision,
			ip
		);
		added.returned++;
	}

	// ── Cancelled before it started ──
	{
		const id = await create('XV-4206', 'MP-DV-01', {
			kind: 'corrective',
			dueIn: 4,
			priority: 'high',
			assignees: [tech2],
			notes: 'Leak at the bonnet reported by production.'
		});
		await work.cancelWorkOrder(
			personOf(planner),
			id,
			'No valve work needed: the drops came from a loose clamp on the drain line, refitted by production.',
			(await view(id)).revision,
			ip
		);
		added.cancelled++;
	}

	return added;
}
