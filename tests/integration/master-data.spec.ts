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
import * as qualifications from '../../src/lib/server/qualifications';
import { personOf, RecordError } from '../../src/lib/server/records';
import { signatureMatches, SignatureError } from '../../src/lib/server/signatures/index';
import { appDatabase, setEnv } from './helpers/app-database';

// Plant master data (issue 4/10; REQUIREMENTS MR1, MR2, MR3, MR5, AC4, AT2). Real PostgreSQL:
// the demo seed writes through the same domain functions, and the tests change what it wrote.
let t: Awaited<ReturnType<typeof appDatabase>>;
let siteId: string;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.40';

beforeAll(async () => {
	t = await appDatabase();
	setEnv({ AUTH_LOCKOUT_FAILURES: '5' });
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	// One person who both writes and approves procedures, for the segregation-of-duties checks.
	await t.ownerSql`insert into accounts (username, full_name, email, roles, password_hash)
		select 'both', 'Bo Thorsen', 'both@ostmere.example', array['planner', 'quality'], password_hash
		from accounts where username = 'quality'`;
	for (const row of await t.ownerSql`select id, username, full_name, email, roles from accounts`)
		people[row.username] = {
			id: row.id,
			username: row.username,
			name: row.full_name,
			email: row.email,
			roles: row.roles,
			mustChangePassword: false
		};
	expect(await seedDemoMasterData(DEMO_PASSWORD)).toEqual({
		equipment: 21,
		instruments: 5,
		parts: 5,
		procedures: 3,
		qualifications: 5
	});
	const site = (await currentSite())!;
	siteId = site.id;
	today = siteToday(site.timeZone);
});
afterAll(async () => t?.drop());

const refusal = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected a refusal');
		},
		(e: unknown) => e as Error & { status?: number; field?: string; cause?: { message?: string } }
	);

describe('demo master data (issue 4/10 item 6)', () => {
	it('holds at least twelve diaphragm valves of three sizes and two fail positions, pumps and vessels', async () => {
		const all = await equipment.listEquipment(siteId);
		const valves = await Promise.all(
			all
				.filter((e) => e.equipmentClass === 'diaphragm_valve')
				.map((v) => equipment.getEquipment(v.id))
		);
		expect(valves.length).toBeGreaterThanOrEqual(12);
		expect(new Set(valves.map((v) => v!.current.attributes.nominalSize)).size).toBe(3);
		expect(
			new Set(valves.map((v) => v!.current.attributes.actuatorFailPosition)).size
		).toBeGreaterThanOrEqual(2);
		expect(all.filter((e) => e.equipmentClass === 'pump').length).toBeGreaterThanOrEqual(2);
		expect(all.filter((e) => e.equipmentClass === 'vessel').length).toBeGreaterThanOrEqual(1);
		expect(all.every((e) => e.status === 'in_service')).toBe(true);
	});
	it('is idempotent: a second run adds nothing', async () => {
		expect(await seedDemoMasterData(DEMO_PASSWORD)).toEqual({
			equipment: 0,
			instruments: 0,
			parts: 0,
			procedures: 0,
			qualifications: 0
		});
	});
	it('has approved diaphragm procedures whose approval signature matches their content', async () => {
		for (const code of ['MP-DV-01', 'MP-DV-02']) {
			const id = (await procedures.findProcedureByCode(code))!;
			const v = (await procedures.effectiveVersion(id))!;
			expect(v.status).toBe('approved');
			const found = (await procedures.getVersion(v.id))!;
			expect(found.signatures).toHaveLength(1);
			expect(found.signatures[0]).toMatchObject({
				meaning: 'approved',
				signerName: people.quality!.name,
				matches: true
			});
		}
	});
});

describe('equipment master data is versioned (MR2, AT2)', () => {
	it('a change makes a new version with the reason; the old version and its values stay, and the audit event has both', async () => {
		const id = (await equipment.findByTag('XV-3104'))!;
		const before = (await equipment.getEquipment(id))!;
		const details = {
			areaId: before.current.areaId,
			equipmentClass: 'diaphragm_valve' as const,
			description: before.current.description,
			gmpCritical: true,
			attributes: { ...before.current.attributes, diaphragmMaterialCode: 'DM-PTFE-2P' }
		};
		const version = await equipment.changeEquipment(
			personOf(people.planner!),
			id,
			1,
			details,
			'Manufacturer’s data updated',
			ip
		);
		expect(version).toBe(2);
		const after = (await equipment.getEquipment(id))!;
		expect(after.versions.map((v) => v.version)).toEqual([2, 1]);
		expect(after.versions[1]!.attributes.diaphragmMaterialCode).toBe('DM-EPDM-70');
		expect(after.current.attributes.diaphragmMaterialCode).toBe('DM-PTFE-2P');
		expect(after.log[0]).toMatchObject({
			kind: 'version',
			detail: 'Manufacturer’s data updated',
			by: people.planner!.name
		});
		const [event] = await t.ownerSql`
			select reason, new_values, previous_values, actor_name, client_address from audit_event
			where action = 'equipment.change' and entity_id = ${id}`;
		expect(event).toMatchObject({
			reason: 'Manufacturer’s data updated',
			actor_name: people.planner!.name,
			client_address: ip
		});
		expect(event!.previous_values.attributes.diaphragmMaterialCode).toBe('DM-EPDM-70');
		expect(event!.new_values.attributes.diaphragmMaterialCode).toBe('DM-PTFE-2P');
	});
	it('refuses a change made on a version someone else has already changed (409), a blank reason and no change at all', async () => {
		const id = (await equipment.findByTag('XV-3104'))!;
		const v = (await equipment.getEquipment(id))!.current;
		const details = {
			areaId: v.areaId,
			equipmentClass: 'diaphragm_valve' as const,
			description: 'Renamed',
			gmpCritical: true,
			attributes: v.attributes
		};
		expect(
			(
				await refusal(
					equipment.changeEquipment(personOf(people.planner!), id, 1, details, 'Late edit')
				)
			).status
		).toBe(409);
		expect(
			(await refusal(equipment.changeEquipment(personOf(people.planner!), id, 2, details, '   ')))
				.field
		).toBe('reason');
		const same = { ...details, description: v.description };
		expect(
			(await refusal(equipment.changeEquipment(personOf(people.planner!), id, 2, same, 'No-op')))
				.message
		).toMatch(/Nothing was changed/);
	});
	it('refuses attributes that do not fit the class and a tag registered twice', async () => {
		const area = (await equipment.areasOf(siteId))[0]!.id;
		const bad = {
			tag: 'XV-9001',
			areaId: area,
			equipmentClass: 'diaphragm_valve' as const,
			description: 'Test',
			gmpCritical: true,
			attributes: { nominalSize: 'DN 25' }
		};
		expect(
			(await refusal(equipment.registerEquipment(personOf(people.planner!), siteId, bad))).field
		).toBe('attributes');
		const pump = {
			...bad,
			tag: 'XV-3101',
			equipmentClass: 'pump' as const,
			attributes: { pumpType: 'Centrifugal', ratedFlowM3h: 3, sealType: '' }
		};
		expect(
			(await refusal(equipment.registerEquipment(personOf(people.planner!), siteId, pump))).status
		).toBe(409);
	});
	it('refuses people without the role, and administrators always (AC3)', async () => {
		const id = (await equipment.findByTag('XV-3101'))!;
		const v = (await equipment.getEquipment(id))!.current;
		const details = {
			areaId: v.areaId,
			equipmentClass: 'diaphragm_valve' as const,
			description: 'X',
			gmpCritical: true,
			attributes: v.attributes
		};
		for (const who of ['tech1', 'admin', 'inspector'])
			expect(
				(await refusal(equipment.changeEquipment(personOf(people[who]!), id, 1, details, 'Try')))
					.status
			).toBe(403);
	});
	it('status comes from its events: Quality quarantines with a reason and ends it; the log shows both', async () => {
		const id = (await equipment.findByTag('P-3101'))!;
		await equipment.changeQuarantine(
			personOf(people.quality!),
			id,
			true,
			'Seal leak seen on the round',
			ip
		);
		expect((await equipment.getEquipment(id))!.status).toBe('quarantined');
		expect(
			(await refusal(equipment.changeQuarantine(personOf(people.quality!), id, true, 'Again')))
				.status
		).toBe(409);
		expect(
			(await refusal(equipment.changeQuarantine(personOf(people.planner!), id, false, 'Mine')))
				.status
		).toBe(403);
		await equipment.changeQuarantine(
			personOf(people.quality!),
			id,
			false,
			'Seal replaced under its work order',
			ip
		);
		const e = (await equipment.getEquipment(id))!;
		expect(e.status).toBe('in_service');
		expect(e.log.filter((l) => l.kind === 'status').map((l) => l.title)).toEqual([
			'Status: In service',
			'Status: Quarantined',
			'Status: In service'
		]);
	});
	it('the database refuses UPDATE and DELETE of a version: the application role by grant, the owner by trigger', async () => {
		await expect(t.appSql`update equipment_versions set description = 'x'`).rejects.toThrow(
			/permission denied/
		);
		await expect(t.appSql`delete from equipment_status_changes`).rejects.toThrow(
			/permission denied/
		);
		await expect(t.ownerSql`update equipment_versions set description = 'x'`).rejects.toThrow(
			/append-only/
		);
		await expect(t.ownerSql`delete from calibrations`).rejects.toThrow(/append-only/);
		await expect(t.ownerSql`truncate qualification_withdrawals`).rejects.toThrow(/append-only/);
	});
});

describe('procedures under change control (MR1, MR5, ES3)', () => {
	it('an approved version cannot change: the server refuses and so does the database', async () => {
		const id = (await procedures.findProcedureByCode('MP-DV-02'))!;
		const v = (await procedures.effectiveVersion(id))!;
		const changed = { ...v.content, title: 'Changed after approval' };
		const e = await refusal(
			procedures.saveDraft(personOf(people.planner!), v.id, v.revision, changed)
		);
		expect(e).toBeInstanceOf(RecordError);
		expect(e.status).toBe(409);
		await expect(
			t.appSql`insert into procedure_revisions (id, version_id, revision, content, recorded_by, recorded_by_name, recorded_at, audit_seq)
				values (gen_random_uuid(), ${v.id}, ${v.revision + 1}, '{}'::jsonb, ${people.planner!.id}, 'x', now(), 1)`
		).rejects.toThrow(/is approved and cannot be changed/);
	});
	it('a change is a new draft with a reason; approving it supersedes the old version; the comparison shows the change', async () => {
		const id = (await procedures.findProcedureByCode('MP-DV-02'))!;
		const old = (await procedures.effectiveVersion(id))!;
		expect(
			(await refusal(procedures.startNewVersion(personOf(people.planner!), id, ''))).field
		).toBe('reason');
		const versionId = await procedures.startNewVersion(
			personOf(people.planner!),
			id,
			'Periodic review of the procedure',
			ip
		);
		expect(
			(await refusal(procedures.startNewVersion(personOf(people.planner!), id, 'Another'))).status
		).toBe(409);
		let draft = (await procedures.getVersion(versionId))!;
		expect(draft.version).toMatchObject({
			version: 2,
			status: 'draft',
			revision: 1,
			content: old.content
		});
		const edited = structuredClone(draft.version.content);
		edited.steps[0]!.fields[1]!.max = 35;
		expect(await procedures.saveDraft(personOf(people.planner!), versionId, 1, edited, ip)).toBe(2);
		// Someone else's save on top of revision 1 is refused, not merged.
		expect(
			(await refusal(procedures.saveDraft(personOf(people.planner!), versionId, 1, edited))).status
		).toBe(409);
		// Approval needs the revision the approver read.
		expect(
			(await refusal(procedures.approveVersion(people.quality!, versionId, 1, DEMO_PASSWORD)))
				.status
		).toBe(409);
		const wrong = await refusal(
			procedures.approveVersion(people.quality!, versionId, 2, 'not-my-password')
		);
		expect(wrong).toBeInstanceOf(SignatureError);
		const signature = await procedures.approveVersion(
			people.quality!,
			versionId,
			2,
			DEMO_PASSWORD,
			ip
		);
		const found = (await procedures.getProcedure(id))!;
		expect(found.versions.map((v) => [v.version, v.status])).toEqual([
			[2, 'approved'],
			[1, 'superseded']
		]);
		draft = (await procedures.getVersion(versionId))!;
		expect(
			await signatureMatches(signature.id, procedures.signedRecord(found.code, draft.version))
		).toBe(true);
		// The signature does not move to the old version (another record) nor survive a changed content.
		const v1 = found.versions[1]!;
		expect(await signatureMatches(signature.id, procedures.signedRecord(found.code, v1))).toBe(
			false
		);
		expect(
			await signatureMatches(
				signature.id,
				procedures.signedRecord(found.code, { ...draft.version, content: old.content })
			)
		).toBe(false);
		const [approval] =
			await t.ownerSql`select count(*)::int as n from audit_event where action = 'procedure.approve' and entity_id = ${versionId}`;
		expect(approval!.n).toBe(1);
	});
	it('the approver is never an author: refused by the server (403) and by the database', async () => {
		const content = structuredClone(
			(await procedures.effectiveVersion((await procedures.findProcedureByCode('MP-PU-01'))!))!
				.content
		);
		const { versionId } = await procedures.createProcedure(
			personOf(people.both!),
			siteId,
			'MP-TS-01',
			content,
			ip
		);
		const e = await refusal(procedures.approveVersion(people.both!, versionId, 1, DEMO_PASSWORD));
		expect(e.status).toBe(403);
		const [sig] = await t.ownerSql`select id from signatures limit 1`;
		await expect(
			t.appSql`insert into procedure_approvals (id, version_id, revision, signature_id, recorded_by, recorded_by_name, recorded_at, audit_seq)
				values (gen_random_uuid(), ${versionId}, 1, ${sig!.id}, ${people.both!.id}, 'x', now(), 1)`
		).rejects.toThrow(/cannot be one of its authors/);
		// Someone else approves it.
		await procedures.approveVersion(people.quality!, versionId, 1, DEMO_PASSWORD);
		const [row] =
			await t.ownerSql`select count(*)::int as n from procedure_approvals where version_id = ${versionId}`;
		expect(row!.n).toBe(1);
	});
	it('only Quality approves, and only Planners write', async () => {
		const id = (await procedures.findProcedureByCode('MP-TS-01'))!;
		const v = (await procedures.getProcedure(id))!.versions[0]!;
		expect(
			(await refusal(procedures.approveVersion(people.planner!, v.id, v.revision, DEMO_PASSWORD)))
				.status
		).toBe(403);
		expect(
			(await refusal(procedures.startNewVersion(personOf(people.quality!), id, 'Mine'))).status
		).toBe(403);
	});
});

describe('reference instruments (MR3)', () => {
	it('an out-of-calibration instrument is unusable today and usable on a day inside its interval', async () => {
		const list = await instruments.listInstruments(siteId, today);
		const pg = list.find((i) => i.code === 'PG-01')!;
		expect(pg.fitness).toMatchObject({ usable: false, why: 'expired' });
		expect(await instruments.instrumentFitness(pg.id, addDays(today, -100))).toMatchObject({
			usable: true
		});
		expect((await instruments.usableInstruments(siteId, today, 'pressure gauge')).length).toBe(0);
		expect(
			(await instruments.usableInstruments(siteId, today, 'Flow meter')).map((i) => i.code)
		).toEqual(['FM-01']);
	});
	it('the list shows what falls due within 30 days', async () => {
		const list = await instruments.listInstruments(siteId, today);
		expect(list.filter((i) => i.dueSoon).map((i) => i.code)).toEqual(['TW-01']);
	});
	it('a new passed calibration makes it usable again; a failed one makes it unusable at once', async () => {
		const id = (await instruments.listInstruments(siteId, today)).find(
			(i) => i.code === 'PG-01'
		)!.id;
		await instruments.recordCalibration(personOf(people.planner!), id, {
			performedOn: today,
			dueOn: addDays(today, 365),
			certificate: 'CAL-T-1',
			asFound: 'out_of_tolerance',
			asLeft: 'pass',
			note: ''
		});
		expect(await instruments.instrumentFitness(id, today)).toMatchObject({ usable: true });
		await instruments.recordCalibration(personOf(people.quality!), id, {
			performedOn: today,
			dueOn: addDays(today, 365),
			certificate: 'CAL-T-2',
			asFound: 'out_of_tolerance',
			asLeft: 'fail',
			note: 'Dropped'
		});
		expect(await instruments.instrumentFitness(id, today)).toMatchObject({
			usable: false,
			why: 'failed'
		});
		expect(
			(
				await refusal(
					instruments.recordCalibration(personOf(people.tech1!), id, {
						performedOn: today,
						dueOn: today,
						certificate: 'X',
						asFound: 'within',
						asLeft: 'pass',
						note: ''
					})
				)
			).status
		).toBe(403);
	});
	it('withdrawing an instrument is a new version with a reason; it is then never usable', async () => {
		const i = (await instruments.listInstruments(siteId, today)).find((x) => x.code === 'CA-01')!;
		const details = {
			kind: i.kind,
			description: i.description,
			rangeMin: i.range.min,
			rangeMax: i.range.max,
			unit: i.unit,
			uncertaintyU95: i.uncertaintyU95,
			retired: true
		};
		expect(
			await instruments.changeInstrument(
				personOf(people.planner!),
				i.id,
				1,
				details,
				'Damaged jaws'
			)
		).toBe(2);
		expect(await instruments.instrumentFitness(i.id, today)).toMatchObject({
			usable: false,
			why: 'retired'
		});
		// A withdrawal does not reach back: the day before it, inside its calibration, it was usable.
		expect(await instruments.instrumentFitness(i.id, addDays(today, -1))).toMatchObject({
			usable: true
		});
	});
});

describe('parts and lots', () => {
	it('records lots once per part and keeps part versions', async () => {
		const p = (await parts.listParts(siteId, 'DIA-025-EP'))[0]!;
		expect(p.lots).toBe(2);
		expect(
			(
				await refusal(
					parts.receiveLot(personOf(people.planner!), p.id, {
						supplierLot: 'L25-0412',
						receivedOn: today,
						expiresOn: null,
						quantityReceived: 1
					})
				)
			).status
		).toBe(409);
		expect(
			await parts.changePart(
				personOf(people.planner!),
				p.id,
				1,
				{ description: 'Diaphragm DN 25, EPDM, steam grade', materialCode: p.materialCode },
				'Wording made clearer'
			)
		).toBe(2);
		const found = (await parts.getPart(p.id))!;
		expect(found.versions.map((v) => v.description)).toEqual([
			'Diaphragm DN 25, EPDM, steam grade',
			'Diaphragm DN 25, EPDM'
		]);
	});
});

describe('qualifications (AC4)', () => {
	it('a lapsed qualification is reported as not qualified; current ones are', async () => {
		const pu = (await procedures.findProcedureByCode('MP-PU-01'))!;
		const dv = (await procedures.findProcedureByCode('MP-DV-01'))!;
		expect(await qualifications.isQualified(people.tech2!.id, pu, today)).toBe(false);
		expect(await qualifications.isQualified(people.tech2!.id, pu, addDays(today, -200))).toBe(true);
		expect(await qualifications.isQualified(people.tech1!.id, dv, today)).toBe(true);
		expect(await qualifications.isQualified(people.tech2!.id, dv, today)).toBe(true);
		expect(await qualifications.isQualified(people.tech1!.id, pu, today)).toBe(false);
		const mine = await qualifications.listQualifications(today, people.tech2!.id);
		expect(mine.map((q) => [q.procedureCode, q.qualified])).toEqual(
			expect.arrayContaining([
				['MP-PU-01', false],
				['MP-DV-01', true],
				['MP-DV-02', true]
			])
		);
	});
	it('a new training record renews a lapsed qualification', async () => {
		const pu = (await procedures.findProcedureByCode('MP-PU-01'))!;
		await qualifications.recordQualification(personOf(people.quality!), {
			accountId: people.tech2!.id,
			procedureId: pu,
			trainedOn: today,
			expiresOn: addDays(today, 365),
			trainer: 'Priya Lindqvist',
			note: ''
		});
		expect(await qualifications.isQualified(people.tech2!.id, pu, today)).toBe(true);
	});
});

describe('refusals found in review', () => {
	it('nobody records their own training; only technicians are trained; no training in the future', async () => {
		const dv = (await procedures.findProcedureByCode('MP-DV-01'))!;
		const training = {
			procedureId: dv,
			trainedOn: today,
			expiresOn: addDays(today, 365),
			trainer: 'T',
			note: ''
		};
		const [{ id: both }] =
			(await t.ownerSql`select id from accounts where username = 'both'`) as unknown as [
				{ id: string }
			];
		expect(
			(
				await refusal(
					qualifications.recordQualification(personOf(people.both!), {
						...training,
						accountId: both
					})
				)
			).status
		).toBe(403);
		const [denied] =
			await t.ownerSql`select new_values from audit_event where action = 'auth.access_denied' and entity_id = ${both} order by seq desc limit 1`;
		expect(denied!.new_values.what).toBe('record own training');
		expect(
			(
				await refusal(
					qualifications.recordQualification(personOf(people.quality!), {
						...training,
						accountId: people.planner!.id
					})
				)
			).field
		).toBe('accountId');
		expect(
			(
				await refusal(
					qualifications.recordQualification(personOf(people.quality!), {
						...training,
						accountId: people.tech1!.id,
						trainedOn: addDays(today, 1)
					})
				)
			).field
		).toBe('trainedOn');
	});
	it('a calibration or a lot cannot be recorded for a day after today', async () => {
		const i = (await instruments.listInstruments(siteId, today))[0]!;
		const future = addDays(today, 2);
		const e = await refusal(
			instruments.recordCalibration(personOf(people.planner!), i.id, {
				performedOn: future,
				dueOn: addDays(future, 10),
				certificate: 'X',
				asFound: 'within',
				asLeft: 'pass',
				note: ''
			})
		);
		expect(e.field).toBe('performedOn');
		const p = (await parts.listParts(siteId))[0]!;
		expect(
			(
				await refusal(
					parts.receiveLot(personOf(people.planner!), p.id, {
						supplierLot: 'FUT-1',
						receivedOn: future,
						expiresOn: null,
						quantityReceived: 1
					})
				)
			).field
		).toBe('receivedOn');
	});
	it('refused role checks are audited (AT7); an author’s attempt to approve is audited as a refused signing', async () => {
		const id = (await equipment.findByTag('XV-3102'))!;
		await refusal(equipment.changeQuarantine(personOf(people.tech1!), id, true, 'No'));
		const [denied] =
			await t.ownerSql`select actor_name, new_values from audit_event where action = 'auth.access_denied' order by seq desc limit 1`;
		expect(denied).toMatchObject({
			actor_name: people.tech1!.name,
			new_values: { what: 'quarantine equipment or end a quarantine' }
		});
		const content = structuredClone(
			(await procedures.effectiveVersion((await procedures.findProcedureByCode('MP-DV-02'))!))!
				.content
		);
		const { versionId } = await procedures.createProcedure(
			personOf(people.both!),
			siteId,
			'MP-TS-02',
			content
		);
		await refusal(procedures.approveVersion(people.both!, versionId, 1, DEMO_PASSWORD));
		const [refused] =
			await t.ownerSql`select actor_name, new_values from audit_event where action = 'signature.refused' and entity_id = ${versionId}`;
		expect(refused).toMatchObject({
			actor_name: 'Bo Thorsen',
			new_values: { reason: 'author_cannot_approve' }
		});
	});
	it('the database refuses an approval whose signature is not the approver’s Approved signature of that version', async () => {
		const id = (await procedures.findProcedureByCode('MP-TS-02'))!;
		const v = (await procedures.getProcedure(id))!.versions[0]!;
		const [other] =
			await t.ownerSql`select id from signatures where signer_id = ${people.quality!.id} limit 1`;
		await expect(
			t.appSql`insert into procedure_approvals (id, version_id, revision, signature_id, recorded_by, recorded_by_name, recorded_at, audit_seq)
				values (gen_random_uuid(), ${v.id}, 1, ${other!.id}, ${people.quality!.id}, 'x', now(), 1)`
		).rejects.toThrow(/needs the approver's Approved signature of this version/);
	});
	it('procedure content from a caller other than the form is checked by the same schema', async () => {
		const id = (await procedures.findProcedureByCode('MP-TS-02'))!;
		const v = (await procedures.getProcedure(id))!.versions[0]!;
		const bad = { ...v.content, steps: [] };
		expect(
			(await refusal(procedures.saveDraft(personOf(people.planner!), v.id, v.revision, bad))).field
		).toBe('content');
	});
	it('a follow-up must name another procedure that exists (found by trying the app)', async () => {
		const content = structuredClone(
			(await procedures.effectiveVersion((await procedures.findProcedureByCode('MP-DV-01'))!))!
				.content
		);
		for (const followUpCode of ['MP-NOPE-99', 'MP-TS-03'])
			expect(
				(
					await refusal(
						procedures.createProcedure(personOf(people.planner!), siteId, 'MP-TS-03', {
							...content,
							followUpCode
						})
					)
				).field
			).toBe('followUpCode');
	});
	it('part-lot, tightening and compression fields need a procedure for diaphragm valves', async () => {
		const content = structuredClone(
			(await procedures.effectiveVersion((await procedures.findProcedureByCode('MP-DV-01'))!))!
				.content
		);
		const e = await refusal(
			procedures.createProcedure(personOf(people.planner!), siteId, 'MP-TS-04', {
				...content,
				appliesTo: 'pump',
				followUpCode: null
			})
		);
		expect(e.field).toBe('content');
		expect(e.message).toMatch(/needs a diaphragm valve’s data/);
	});
	it('a lot number differing only in case is the same lot; material codes are stored in capitals', async () => {
		const p = (await parts.listParts(siteId, 'DIA-040-EP'))[0]!;
		expect(
			(
				await refusal(
					parts.receiveLot(personOf(people.planner!), p.id, {
						supplierLot: 'l25-0630',
						receivedOn: today,
						expiresOn: null,
						quantityReceived: 1
					})
				)
			).status
		).toBe(409);
		const { registerPartSchema } = await import('../../src/lib/schemas/master');
		expect(
			registerPartSchema.parse({
				partNumber: 'dia-x',
				description: 'X',
				materialCode: ' dm epdm 70 '
			}).materialCode
		).toBe('DM-EPDM-70');
	});
	it('usage records must add a positive, finite amount', async () => {
		const id = (await equipment.findByTag('XV-3101'))!;
		const { db } = await import('../../src/lib/server/db/index');
		for (const amount of [0, -1, Number.NaN, Number.POSITIVE_INFINITY])
			expect(
				(
					await refusal(
						db().transaction((tx) =>
							equipment.recordUsage(tx, { kind: 'system', name: 'test' }, id, {
								kind: 'sip_cycles',
								amount,
								occurredAt: new Date(),
								note: ''
							})
						)
					)
				).field
			).toBe('amount');
	});
});

describe('withdrawing a training record', () => {
	it('stops it qualifying from today, keeps it visible, and is audited with the reason', async () => {
		const ts = (await procedures.findProcedureByCode('MP-TS-01'))!;
		await qualifications.recordQualification(personOf(people.planner!), {
			accountId: people.tech1!.id,
			procedureId: ts,
			trainedOn: addDays(today, -10),
			expiresOn: addDays(today, 300),
			trainer: 'T',
			note: ''
		});
		expect(await qualifications.isQualified(people.tech1!.id, ts, today)).toBe(true);
		const row = (await qualifications.listQualifications(today, people.tech1!.id)).find(
			(q) => q.procedureId === ts
		)!;
		expect(
			(await refusal(qualifications.withdrawQualification(personOf(people.quality!), row.id, '  ')))
				.status
		).toBe(422);
		expect(
			(await refusal(qualifications.withdrawQualification(personOf(people.tech1!), row.id, 'Mine')))
				.status
		).toBe(403);
		await qualifications.withdrawQualification(
			personOf(people.quality!),
			row.id,
			'Entered on the wrong record',
			ip
		);
		expect(await qualifications.isQualified(people.tech1!.id, ts, today)).toBe(false);
		expect(await qualifications.isQualified(people.tech1!.id, ts, addDays(today, -1))).toBe(true);
		const after = (await qualifications.listQualifications(today, people.tech1!.id)).find(
			(q) => q.procedureId === ts
		)!;
		expect(after).toMatchObject({
			qualified: false,
			withdrawnOn: today,
			withdrawalReason: 'Entered on the wrong record'
		});
		expect(
			(
				await refusal(
					qualifications.withdrawQualification(personOf(people.quality!), row.id, 'Again')
				)
			).status
		).toBe(409);
		const [event] =
			await t.ownerSql`select reason from audit_event where action = 'qualification.withdraw'`;
		expect(event!.reason).toBe('Entered on the wrong record');
		await expect(t.ownerSql`delete from qualification_withdrawals`).rejects.toThrow(/append-only/);
	});
});

describe('the audit trail after all of it', () => {
	it('verifies end to end', async () => {
		expect(await verifyChain(t.ownerSql)).toMatchObject({ ok: true, firstBadSeq: null });
	});
});
