import { siteToday, addDays } from '../../../fitness';
import type { DiaphragmValveAttributes, EquipmentClass, FailPosition } from '../../../equipment';
import { db } from '../index';
import * as equipment from '../../equipment';
import * as instruments from '../../instruments';
import * as parts from '../../parts';
import * as procedures from '../../procedures';
import * as qualifications from '../../qualifications';
import { currentSite } from '../../plant';
import type { Recorder } from '../../records';
import type { ProcedureContent } from '../../../schemas/procedure';
import {
	diaphragmReplacement,
	diaphragmReplacementChange,
	diaphragmReplacementV1,
	retighteningCheck,
	sealInspection
} from './procedures';
import { demoPerson } from './people';
export { seedDemoWork, type WorkSeedResult } from './work';
export { seedDemoPlantUsage, seedDemoSchedules } from './schedules';
export { seedDemoReliability } from './reliability';
export { closeDatabase } from '../index';

/**
 * Demo master data (4/10), written through the same domain functions the app uses, so every row
 * has its audit event. All names are invented. Dates are relative to the day of seeding, so the
 * demo always has a current calibration, one falling due soon and one expired. Idempotent: what
 * exists (by tag, id, part number, procedure code) is left alone.
 */
const seeder: Recorder = { kind: 'system', name: 'demo seed' };

type Valve = {
	tag: string;
	area: string;
	size: string;
	fail: FailPosition;
	material: string;
	description: string;
	fasteners: number;
};

const valves: Valve[] = [
	// Purified-water / WFI loop (B30, WFI generation)
	{
		tag: 'XV-3101',
		area: 'WFI',
		size: 'DN 40',
		fail: 'spring_to_close',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'WFI loop supply isolation'
	},
	{
		tag: 'XV-3102',
		area: 'WFI',
		size: 'DN 40',
		fail: 'spring_to_close',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'WFI loop return isolation'
	},
	{
		tag: 'XV-3103',
		area: 'WFI',
		size: 'DN 25',
		fail: 'spring_to_close',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'WFI point of use 1, filling suite'
	},
	{
		tag: 'XV-3104',
		area: 'WFI',
		size: 'DN 25',
		fail: 'spring_to_close',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'WFI point of use 2, component preparation'
	},
	{
		tag: 'XV-3105',
		area: 'WFI',
		size: 'DN 25',
		fail: 'spring_to_open',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'WFI loop drain'
	},
	{
		tag: 'XV-3106',
		area: 'WFI',
		size: 'DN 15',
		fail: 'spring_to_close',
		material: 'DM-PTFE-2P',
		fasteners: 4,
		description: 'WFI sample valve, tank outlet'
	},
	{
		tag: 'XV-3107',
		area: 'WFI',
		size: 'DN 15',
		fail: 'spring_to_open',
		material: 'DM-PTFE-2P',
		fasteners: 4,
		description: 'WFI tank vent filter drain'
	},
	{
		tag: 'XV-3108',
		area: 'WFI',
		size: 'DN 40',
		fail: 'spring_to_open',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'Loop heat exchanger bypass'
	},
	// Buffer preparation process skid (B10)
	{
		tag: 'XV-4201',
		area: 'BUF',
		size: 'DN 25',
		fail: 'spring_to_close',
		material: 'DM-PTFE-2P',
		fasteners: 4,
		description: 'Buffer skid tank outlet'
	},
	{
		tag: 'XV-4202',
		area: 'BUF',
		size: 'DN 25',
		fail: 'spring_to_close',
		material: 'DM-PTFE-2P',
		fasteners: 4,
		description: 'Buffer skid transfer to filling'
	},
	{
		tag: 'XV-4203',
		area: 'BUF',
		size: 'DN 25',
		fail: 'spring_to_open',
		material: 'DM-PTFE-2P',
		fasteners: 4,
		description: 'Buffer skid recirculation'
	},
	{
		tag: 'XV-4204',
		area: 'BUF',
		size: 'DN 15',
		fail: 'spring_to_close',
		material: 'DM-PTFE-2P',
		fasteners: 4,
		description: 'Buffer skid sample valve'
	},
	{
		tag: 'XV-4205',
		area: 'BUF',
		size: 'DN 40',
		fail: 'spring_to_close',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'Buffer skid clean-steam inlet'
	},
	{
		tag: 'XV-4206',
		area: 'BUF',
		size: 'DN 40',
		fail: 'spring_to_close',
		material: 'DM-EPDM-70',
		fasteners: 4,
		description: 'Buffer skid condensate drain'
	}
];

const others: {
	tag: string;
	area: string;
	cls: EquipmentClass;
	description: string;
	attributes: Record<string, unknown>;
}[] = [
	{
		tag: 'P-3101',
		area: 'WFI',
		cls: 'pump',
		description: 'WFI loop circulation pump A',
		attributes: {
			pumpType: 'Sanitary centrifugal',
			ratedFlowM3h: 12,
			sealType: 'Single mechanical seal'
		}
	},
	{
		tag: 'P-3102',
		area: 'WFI',
		cls: 'pump',
		description: 'WFI loop circulation pump B',
		attributes: {
			pumpType: 'Sanitary centrifugal',
			ratedFlowM3h: 12,
			sealType: 'Single mechanical seal'
		}
	},
	{
		tag: 'P-4201',
		area: 'BUF',
		cls: 'pump',
		description: 'Buffer skid transfer pump',
		attributes: {
			pumpType: 'Sanitary centrifugal',
			ratedFlowM3h: 4,
			sealType: 'Double mechanical seal'
		}
	},
	{
		tag: 'T-3101',
		area: 'WFI',
		cls: 'vessel',
		description: 'WFI storage tank',
		attributes: { volumeLitres: 5000, designPressureBarG: 3, jacketed: true }
	},
	{
		tag: 'T-4201',
		area: 'BUF',
		cls: 'vessel',
		description: 'Buffer hold tank',
		attributes: { volumeLitres: 800, designPressureBarG: 2.5, jacketed: true }
	},
	{
		tag: 'E-3101',
		area: 'WFI',
		cls: 'heat_exchanger',
		description: 'Point-of-use cooler, filling suite',
		attributes: { exchangerType: 'Double tube sheet, shell and tube', designPressureBarG: 6 }
	},
	{
		tag: 'F-4201',
		area: 'BUF',
		cls: 'filter_housing',
		description: 'Buffer sterile filter housing',
		attributes: { cartridges: 1, ratingMicrometres: 0.2 }
	}
];

export type MasterSeedResult = {
	equipment: number;
	instruments: number;
	parts: number;
	procedures: number;
	qualifications: number;
};

const person = demoPerson;

export async function seedDemoMasterData(password: string): Promise<MasterSeedResult> {
	const added: MasterSeedResult = {
		equipment: 0,
		instruments: 0,
		parts: 0,
		procedures: 0,
		qualifications: 0
	};
	const site = await currentSite();
	if (!site) throw new Error('the demo site is missing: seed the plant first');
	const today = siteToday(site.timeZone);
	const day = (offset: number) => addDays(today, offset);
	const areaIds = new Map((await equipment.areasOf(site.id)).map((a) => [a.code, a.id]));

	for (const v of valves) {
		if (await equipment.findByTag(v.tag)) continue;
		const attributes: DiaphragmValveAttributes = {
			nominalSize: v.size,
			diaphragmMaterialCode: v.material,
			actuatorFailPosition: v.fail,
			bodyMaterial: 'Stainless steel 316L, electropolished',
			bonnetFasteners: v.fasteners,
			compressionMinPercent: 10,
			compressionMaxPercent: 15,
			fastenerTorqueNm: v.size === 'DN 15' ? 3 : v.size === 'DN 25' ? 6 : 10
		};
		const id = await equipment.registerEquipment(seeder, site.id, {
			tag: v.tag,
			areaId: areaIds.get(v.area)!,
			equipmentClass: 'diaphragm_valve',
			description: v.description,
			gmpCritical: true,
			attributes
		});
		await db().transaction((tx) =>
			equipment.recordUsage(tx, seeder, id, {
				kind: 'sip_cycles',
				amount: 20 + (Number(v.tag.slice(-2)) % 7) * 9,
				occurredAt: new Date(),
				note: 'Counter carried over from the control system at go-live (demo data)'
			})
		);
		added.equipment++;
	}
	for (const o of others) {
		if (await equipment.findByTag(o.tag)) continue;
		await equipment.registerEquipment(seeder, site.id, {
			tag: o.tag,
			areaId: areaIds.get(o.area)!,
			equipmentClass: o.cls,
			description: o.description,
			gmpCritical: o.cls !== 'heat_exchanger',
			attributes: o.attributes
		});
		added.equipment++;
	}

	const existing = new Set((await instruments.listInstruments(site.id, today)).map((i) => i.code));
	const demoInstruments = [
		{
			code: 'TW-01',
			kind: 'Torque wrench',
			description: 'Click torque wrench, 1/4 in drive',
			rangeMin: 2,
			rangeMax: 25,
			unit: 'N·m',
			uncertaintyU95: 0.3,
			cal: { performedOn: day(-345), dueOn: day(20), certificate: 'CAL-24-0117' }
		},
		{
			code: 'TG-01',
			kind: 'Thickness gauge',
			description: 'Dial thickness gauge',
			rangeMin: 0,
			rangeMax: 10,
			unit: 'mm',
			uncertaintyU95: 0.01,
			cal: { performedOn: day(-60), dueOn: day(305), certificate: 'CAL-25-0342' }
		},
		{
			code: 'FM-01',
			kind: 'Flow meter',
			description: 'Clamp-on ultrasonic flow meter',
			rangeMin: 1,
			rangeMax: 300,
			unit: 'L/min',
			uncertaintyU95: 1.5,
			cal: { performedOn: day(-120), dueOn: day(245), certificate: 'CAL-25-0288' }
		},
		{
			code: 'PG-01',
			kind: 'Pressure gauge',
			description: 'Digital test pressure gauge',
			rangeMin: 0,
			rangeMax: 10,
			unit: 'bar',
			uncertaintyU95: 0.02,
			cal: { performedOn: day(-400), dueOn: day(-35), certificate: 'CAL-24-0051' }
		},
		{
			code: 'CA-01',
			kind: 'Caliper',
			description: 'Digital caliper, 150 mm',
			rangeMin: 0,
			rangeMax: 150,
			unit: 'mm',
			uncertaintyU95: 0.03,
			cal: { performedOn: day(-30), dueOn: day(335), certificate: 'CAL-25-0391' }
		}
	];
	for (const { cal, ...i } of demoInstruments) {
		if (existing.has(i.code)) continue;
		const id = await instruments.registerInstrument(seeder, site.id, { ...i, retired: false });
		await instruments.recordCalibration(seeder, id, {
			...cal,
			asFound: 'within',
			asLeft: 'pass',
			note: 'Demo data'
		});
		added.instruments++;
	}

	const knownParts = new Set((await parts.listParts(site.id)).map((p) => p.partNumber));
	const demoParts = [
		{
			partNumber: 'DIA-015-EP',
			description: 'Diaphragm DN 15, EPDM',
			materialCode: 'DM-EPDM-70',
			lots: [{ supplierLot: 'L24-1187', expiresOn: day(700) }]
		},
		{
			partNumber: 'DIA-025-EP',
			description: 'Diaphragm DN 25, EPDM',
			materialCode: 'DM-EPDM-70',
			lots: [
				{ supplierLot: 'L25-0412', expiresOn: day(900) },
				{ supplierLot: 'L23-0955', expiresOn: day(-20) }
			]
		},
		{
			partNumber: 'DIA-040-EP',
			description: 'Diaphragm DN 40, EPDM',
			materialCode: 'DM-EPDM-70',
			lots: [{ supplierLot: 'L25-0630', expiresOn: day(950) }]
		},
		// PTFE-faced lots: their material code does not match the EPDM valves (the check of 5/10 refuses them there).
		{
			partNumber: 'DIA-025-PT',
			description: 'Diaphragm DN 25, PTFE faced, two-piece',
			materialCode: 'DM-PTFE-2P',
			lots: [{ supplierLot: 'P25-2201', expiresOn: day(1200) }]
		},
		{
			partNumber: 'DIA-015-PT',
			description: 'Diaphragm DN 15, PTFE faced, two-piece',
			materialCode: 'DM-PTFE-2P',
			lots: [{ supplierLot: 'P25-2248', expiresOn: day(1200) }]
		}
	];
	for (const { lots, ...p } of demoParts) {
		if (knownParts.has(p.partNumber)) continue;
		const id = await parts.registerPart(seeder, site.id, p);
		for (const lot of lots)
			await parts.receiveLot(seeder, id, { ...lot, receivedOn: day(-90), quantityReceived: 10 });
		added.parts++;
	}

	const planner = await person('planner');
	const quality = await person('quality');
	const demoProcedures = [
		// The re-tightening check first: the diaphragm replacement names it as its follow-up.
		{ code: 'MP-DV-02', content: retighteningCheck },
		{ code: 'MP-DV-01', content: diaphragmReplacementV1, next: diaphragmReplacement },
		{ code: 'MP-PU-01', content: sealInspection }
	];
	const procedureIds = new Map<string, string>();
	const plannerRecorder = {
		kind: 'person' as const,
		id: planner.id,
		name: planner.name,
		roles: planner.roles
	};
	/** Version 2 through the normal path: a new draft with its reason, the content, Quality's approval. */
	const nextVersion = async (procedureId: string, content: ProcedureContent) => {
		const shown = (await procedures.getProcedure(procedureId))!.versions[0]!;
		if (shown.version >= 2 && shown.status === 'approved') return;
		const versionId =
			shown.status === 'draft'
				? shown.id
				: await procedures.startNewVersion(
						plannerRecorder,
						procedureId,
						diaphragmReplacementChange
					);
		const revision = await procedures.saveDraft(
			plannerRecorder,
			versionId,
			shown.status === 'draft' ? shown.revision : 1,
			content
		);
		await procedures.approveVersion(quality, versionId, revision, password);
	};
	for (const p of demoProcedures) {
		const found = await procedures.findProcedureByCode(p.code);
		if (found) {
			procedureIds.set(p.code, found);
			// A run stopped between writing and approving leaves a draft: approve it now.
			if (!(await procedures.effectiveVersion(found))) {
				const draft = (await procedures.getProcedure(found))!.versions[0]!;
				if (draft.version === 1 || !p.next)
					await procedures.approveVersion(quality, draft.id, draft.revision, password);
			}
			if (p.next) await nextVersion(found, p.next);
			continue;
		}
		const { id, versionId } = await procedures.createProcedure(
			{ kind: 'person', id: planner.id, name: planner.name, roles: planner.roles },
			site.id,
			p.code,
			p.content
		);
		await procedures.approveVersion(quality, versionId, 1, password);
		if (p.next) await nextVersion(id, p.next);
		procedureIds.set(p.code, id);
		added.procedures++;
	}

	if (!(await qualifications.listQualifications(today)).length) {
		const tech1 = await person('tech1');
		const tech2 = await person('tech2');
		const current = {
			trainedOn: day(-90),
			expiresOn: day(275),
			trainer: 'Priya Lindqvist (planner)',
			note: 'Demo data'
		};
		for (const t of [tech1, tech2])
			for (const code of ['MP-DV-01', 'MP-DV-02']) {
				await qualifications.recordQualification(seeder, {
					accountId: t.id,
					procedureId: procedureIds.get(code)!,
					...current
				});
				added.qualifications++;
			}
		await qualifications.recordQualification(seeder, {
			accountId: tech2.id,
			procedureId: procedureIds.get('MP-PU-01')!,
			trainedOn: day(-500),
			expiresOn: day(-135),
			trainer: 'Priya Lindqvist (planner)',
			note: 'Demo data: lapsed, refresher training not yet done'
		});
		added.qualifications++;
	}
	return added;
}
