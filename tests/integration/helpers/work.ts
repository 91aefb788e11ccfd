import { passesFor } from '../../../src/lib/calc/tightening';
import { addDays, siteToday } from '../../../src/lib/fitness';
import { passProgress } from '../../../src/lib/work';
import type { User } from '../../../src/lib/server/auth/guard';
import { seedDemoMasterData } from '../../../src/lib/server/db/demo/index';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../../src/lib/server/db/seed';
import * as instruments from '../../../src/lib/server/instruments';
import * as parts from '../../../src/lib/server/parts';
import { currentSite } from '../../../src/lib/server/plant';
import * as procedures from '../../../src/lib/server/procedures';
import { recordQualification } from '../../../src/lib/server/qualifications';
import { personOf } from '../../../src/lib/server/records';
import * as work from '../../../src/lib/server/work-orders';
import { appDatabase, setEnv } from './app-database';

/**
 * What the work-order tests share: a fresh database with the demo plant, accounts and master
 * data, two more people — tech3 (a technician trained on nothing) and techqa (technician and
 * Quality, trained on the given procedures, so that only segregation of duties can stop them) —
 * and the values of every step of MP-DV-01 that pass.
 */
export async function workDatabase(techqaTrainedOn: string[] = ['MP-DV-01']) {
	const t = await appDatabase();
	setEnv({ AUTH_LOCKOUT_FAILURES: '5' });
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await t.ownerSql`insert into accounts (username, full_name, email, roles, password_hash)
		select 'tech3', 'Ines Varga', 'tech3@ostmere.example', array['technician'], password_hash
		from accounts where username = 'tech1'`;
	await t.ownerSql`insert into accounts (username, full_name, email, roles, password_hash)
		select 'techqa', 'Rui Okafor', 'techqa@ostmere.example', array['technician', 'quality'], password_hash
		from accounts where username = 'tech1'`;
	const people: Record<string, User> = {};
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
	const today = siteToday(site.timeZone);
	for (const code of techqaTrainedOn)
		await recordQualification(personOf(people.planner!), {
			accountId: people.techqa!.id,
			procedureId: (await procedures.findProcedureByCode(code))!,
			trainedOn: today,
			expiresOn: addDays(today, 365),
			trainer: 'Site trainer',
			note: ''
		});
	const lotOf = async (partNumber: string, lot: string) => {
		const list = await parts.listParts(site.id);
		const part = await parts.getPart(list.find((p) => p.partNumber === partNumber)!.id);
		return part!.lots.find((l) => l.supplierLot === lot)!.id;
	};
	const instrumentOf = async (code: string) =>
		(await instruments.listInstruments(site.id, today)).find((i) => i.code === code)!.id;
	/** The values of every step of MP-DV-01 that pass, by step key (a DN 25 EPDM valve's lot). */
	const goodValues = async (): Promise<Record<string, Record<string, string>>> => ({
		isolate: { 'loto-permit': 'LP-0042', depressurised: 'pass', 'surface-temperature': '31' },
		'as-found': { 'as-found-condition': 'Leak at the bonnet' },
		'limiter-before': {
			'limiter-instrument': await instrumentOf('CA-01'),
			'limiter-as-found': '12.5'
		},
		actuator: { 'actuator-air': 'Opened with control air (spring-to-close)' },
		fasteners: { 'fasteners-replaced': '0' },
		seat: { 'seat-condition': 'Cleaned, undamaged' },
		'new-diaphragm': { 'diaphragm-lot': await lotOf('DIA-025-EP', 'L25-0412') },
		reassemble: { 'port-orientation': 'pass' },
		tighten: {
			'thickness-instrument': await instrumentOf('TG-01'),
			'thickness-before': '4.20',
			'thickness-after': '3.65',
			// Guided tightening (6/10): `save` ticks the passes first; the wrench goes with the final torque.
			tightening: 'valve', // the valve's final torque from its data (`save` puts it in)
			wrench: await instrumentOf('TW-01')
		},
		'limiter-after': { 'limiter-as-left': '12.5', 'limiter-matches': 'pass' },
		'flow-check': {
			'flow-instrument': await instrumentOf('FM-01'),
			flow: '52.0',
			'no-leak': 'pass'
		},
		return: { 'locks-removed': 'pass' }
	});
	return { t, people, siteId: site.id, today, lotOf, instrumentOf, goodValues };
}

/** The technician's steps as the tests take them: each names the step version it saw, as a page does. */
export function stepActions(people: Record<string, User>, ip: string) {
	const view = async (id: string) => (await work.getWorkOrder(id))!;
	const stepSeen = async (id: string, key: string) =>
		(await view(id)).steps.find((s) => s.step.key === key)!.status.revision;
	const save = async (
		who: string,
		id: string,
		key: string,
		values: Record<string, string>,
		more: Partial<work.StepSave> = {}
	) => {
		const { wrench, ...entered } = values;
		const wrenches: Record<string, string> = {};
		const wo = await view(id);
		const found = wo.steps.find((s) => s.step.key === key);
		for (const f of found?.step.fields.filter((f) => f.kind === 'tightening' && entered[f.key]) ??
			[]) {
			const plan = passesFor(
				f.pattern,
				Number(wo.attributes.bonnetFasteners),
				Number(wo.attributes.fastenerTorqueNm)
			);
			if (!plan.ok) throw new Error(plan.message);
			for (let n = passProgress(wo.passes, key, f.key).next; n <= plan.value.length; n++)
				await work.tickPass(people[who]!, id, key, f.key, n, await stepSeen(id, key), ip);
			if (wrench) wrenches[f.key] = wrench;
			if (entered[f.key] === 'valve') entered[f.key] = String(wo.attributes.fastenerTorqueNm);
		}
		return work.saveStep(
			people[who]!,
			id,
			key,
			{
				values: entered,
				wrenches,
				reasons: {},
				deviations: {},
				performedAt: null,
				lateReason: '',
				seen: await stepSeen(id, key),
				...more
			},
			ip
		);
	};
	const perform = async (who: string, id: string, key: string, password = DEMO_PASSWORD) =>
		work.performStep(people[who]!, id, key, password, await stepSeen(id, key), ip);
	const verify = async (who: string, id: string, key: string, password = DEMO_PASSWORD) =>
		work.verifyStep(people[who]!, id, key, password, await stepSeen(id, key), ip);
	return { view, stepSeen, save, perform, verify };
}
