import { and, asc, desc, eq, inArray, isNotNull } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { siteToday } from '$lib/fitness';
import { daysBetween, isDay, startOfLocalDay } from '$lib/calc/schedule';
import {
	describeFit,
	fitWeibull,
	lifeAtReliability,
	logGamma,
	Z95,
	type Bounds,
	type Observation
} from '$lib/calc/weibull';
import { equipmentClassLabels, type EquipmentClass } from '$lib/equipment';
import type { ProcedureContent } from '$lib/schemas/procedure';
import type { EntryValue } from '$lib/work';
import { db } from './db/index';
import {
	equipment,
	equipmentUsage,
	equipmentVersions,
	partLifeRecords,
	procedureApprovals,
	procedureRevisions,
	stepEntries,
	workOrders,
	workOrderTransitions
} from './db/schema/index';
import { appendRecordEvent, mustHold, RecordError, siteOrFail, type Recorder } from './records';

/**
 * Diaphragm life (9/10 item 6): how long diaphragms last, per equipment class and diaphragm
 * material, in SIP cycles and in days, with a right-censored Weibull fit ($lib/calc/weibull) and
 * the PM interval it suggests at a chosen reliability.
 *
 * The lives come from two places:
 * - part_life_records: lives carried over from the records kept before Countersign (each row a
 *   diaphragm fitted and removed; a planned removal of a good diaphragm is right-censored);
 * - Countersign's own records: a released work order of a procedure whose approved content has a
 *   part-lot field is a diaphragm replacement on its equipment, at the time the lot was entered
 *   (the entry's performed-at time; a corrected entry counts as corrected). The diaphragm it
 *   removed had been fitted by the previous replacement, or — before the first one — on the day
 *   the last carried-over life ended, and (then) is taken to be of the material of that removed
 *   diaphragm. Its life ends there: a failure when the work order is corrective, right-censored
 *   when it is preventive or a follow-up. Its SIP cycles are those recorded in equipment_usage
 *   between the two fittings.
 * - The diaphragm in service now is right-censored at today: its SIP cycles counted from
 *   equipment_usage since it was fitted, its days since the day it was fitted.
 * A life of zero (fitted today, or no cycles yet) is listed but left out of the fit: it says
 * nothing of how long a diaphragm lasts.
 */

export const lifeUnits = ['cycles', 'days'] as const;
export type LifeUnit = (typeof lifeUnits)[number];
export const lifeUnitWords: Record<LifeUnit, string> = { cycles: 'SIP cycles', days: 'days' };

/** The reliabilities a planner can choose for the suggested interval, in per cent. */
export const reliabilityChoices = [80, 90, 95, 99] as const;
export const DEFAULT_RELIABILITY = 90;

export type LifeEnding = 'failure' | 'planned' | 'in_service';

export type DiaphragmLife = {
	equipmentId: string;
	tag: string;
	equipmentClass: string;
	materialCode: string;
	/** Site-local dates. */
	fittedOn: string;
	/** Null while the diaphragm is in service. */
	removedOn: string | null;
	cycles: number;
	days: number;
	/** A failure; every other life is right-censored (removed as planned, or still in service). */
	failed: boolean;
	ending: LifeEnding;
	/** Where the life comes from, in words (the logbook page, the work orders). */
	source: string;
	/** The Countersign work order that ended the life, if one did. */
	workOrder: { id: string; number: string } | null;
};

export const groupKey = (equipmentClass: string, materialCode: string) =>
	`${equipmentClass}:${materialCode}`;

const classLabel = (c: string) => equipmentClassLabels[c as EquipmentClass] ?? c;

// ── The lives ────────────────────────────────────────────────────────────────

type Fitting = {
	at: Date;
	day: string;
	materialCode: string;
	/** In words, for the source column. */
	from: string;
	/** The replacement's work order (null for the fitting after the last carried-over life). */
	workOrder: { id: string; number: string; kind: string } | null;
};

const endingOfKind = (kind: string): 'failure' | 'planned' =>
	kind === 'corrective' ? 'failure' : 'planned';
const kindWords: Record<string, string> = {
	corrective: 'corrective',
	preventive: 'preventive',
	follow_up: 'follow-up'
};

/** The part-lot fields of a procedure version's content, as "step/field". */
function partLotFields(content: ProcedureContent) {
	return new Set(
		content.steps.flatMap((s) =>
			s.fields.filter((f) => f.kind === 'part_lot').map((f) => `${s.key}/${f.key}`)
		)
	);
}

/**
 * Every diaphragm life at the site, oldest first per equipment: carried over, between
 * Countersign's replacements, and in service now (right-censored at `now`).
 */
export async function diaphragmLives(now = new Date()) {
	const site = await siteOrFail();
	const today = siteToday(site.timeZone, now);

	const versionRows = await db()
		.select({
			id: equipment.id,
			tag: equipment.tag,
			equipmentClass: equipmentVersions.equipmentClass,
			attributes: equipmentVersions.attributes
		})
		.from(equipmentVersions)
		.innerJoin(equipment, eq(equipment.id, equipmentVersions.equipmentId))
		.where(eq(equipment.siteId, site.id))
		.orderBy(asc(equipment.tag), desc(equipmentVersions.version));
	const latest = new Map<string, (typeof versionRows)[number]>();
	for (const r of versionRows) if (!latest.has(r.id)) latest.set(r.id, r);

	const carried = await db()
		.select({ r: partLifeRecords })
		.from(partLifeRecords)
		.innerJoin(equipment, eq(equipment.id, partLifeRecords.equipmentId))
		.where(eq(equipment.siteId, site.id))
		.orderBy(asc(partLifeRecords.fittedOn), asc(partLifeRecords.auditSeq));

	// Released work orders whose procedure version has a part-lot field, and the lot entered there.
	const released = await db()
		.select({
			id: workOrders.id,
			number: workOrders.number,
			kind: workOrders.kind,
			equipmentId: workOrders.equipmentId,
			procedureVersionId: workOrders.procedureVersionId,
			releasedAt: workOrderTransitions.recordedAt
		})
		.from(workOrderTransitions)
		.innerJoin(workOrders, eq(workOrders.id, workOrderTransitions.workOrderId))
		.where(and(eq(workOrderTransitions.kind, 'released'), eq(workOrders.siteId, site.id)));
	const versionIds = [...new Set(released.map((w) => w.procedureVersionId))];
	const contents = versionIds.length
		? await db()
				.select({ versionId: procedureApprovals.versionId, content: procedureRevisions.content })
				.from(procedureApprovals)
				.innerJoin(
					procedureRevisions,
					and(
						eq(procedureRevisions.versionId, procedureApprovals.versionId),
						eq(procedureRevisions.revision, procedureApprovals.revision)
					)
				)
				.where(inArray(procedureApprovals.versionId, versionIds))
		: [];
	const lotFields = new Map(contents.map((c) => [c.versionId, partLotFields(c.content)]));
	const replacing = released.filter((w) => (lotFields.get(w.procedureVersionId)?.size ?? 0) > 0);
	const entries = replacing.length
		? await db()
				.select({
					id: stepEntries.id,
					workOrderId: stepEntries.workOrderId,
					stepKey: stepEntries.stepKey,
					fieldKey: stepEntries.fieldKey,
					value: stepEntries.value,
					performedAt: stepEntries.performedAt,
					corrects: stepEntries.corrects,
					auditSeq: stepEntries.auditSeq
				})
				.from(stepEntries)
				.where(
					and(
						inArray(
							stepEntries.workOrderId,
							replacing.map((w) => w.id)
						),
						isNotNull(stepEntries.lotId)
					)
				)
				.orderBy(asc(stepEntries.auditSeq))
		: [];
	const corrected = new Set(entries.map((e) => e.corrects).filter((c) => c !== null));

	const fittings = new Map<string, Fitting[]>();
	for (const w of replacing) {
		const fields = lotFields.get(w.procedureVersionId)!;
		const entry = entries
			.filter(
				(e) =>
					e.workOrderId === w.id && !corrected.has(e.id) && fields.has(`${e.stepKey}/${e.fieldKey}`)
			)
			.at(-1);
		if (!entry) continue;
		const value = entry.value as EntryValue;
		const attributeMaterial = latest.get(w.equipmentId)?.attributes?.diaphragmMaterialCode;
		const materialCode =
			'materialCode' in value ? value.materialCode : String(attributeMaterial ?? 'unknown');
		const list = fittings.get(w.equipmentId) ?? [];
		list.push({
			at: entry.performedAt,
			day: siteToday(site.timeZone, entry.performedAt),
			materialCode,
			from: w.number,
			workOrder: { id: w.id, number: w.number, kind: w.kind }
		});
		fittings.set(w.equipmentId, list);
	}

	const usage = await db()
		.select({
			equipmentId: equipmentUsage.equipmentId,
			amount: equipmentUsage.amount,
			occurredAt: equipmentUsage.occurredAt
		})
		.from(equipmentUsage)
		.innerJoin(equipment, eq(equipment.id, equipmentUsage.equipmentId))
		.where(and(eq(equipment.siteId, site.id), eq(equipmentUsage.kind, 'sip_cycles')));
	const cyclesBetween = (equipmentId: string, from: Date, to: Date | null) =>
		usage
			.filter(
				(u) =>
					u.equipmentId === equipmentId &&
					u.occurredAt.getTime() >= from.getTime() &&
					(to === null || u.occurredAt.getTime() < to.getTime())
			)
			.reduce((sum, u) => sum + u.amount, 0);

	const lives: DiaphragmLife[] = [];
	const base = (equipmentId: string) => {
		const e = latest.get(equipmentId)!;
		return { equipmentId, tag: e.tag, equipmentClass: e.equipmentClass };
	};
	const equipmentIds = [
		...new Set([...carried.map(({ r }) => r.equipmentId), ...fittings.keys()])
	].filter((id) => latest.has(id));
	for (const equipmentId of equipmentIds) {
		const own = carried.filter(({ r }) => r.equipmentId === equipmentId).map(({ r }) => r);
		for (const r of own)
			lives.push({
				...base(equipmentId),
				materialCode: r.materialCode,
				fittedOn: r.fittedOn,
				removedOn: r.removedOn,
				cycles: r.sipCycles,
				days: daysBetween(r.fittedOn, r.removedOn),
				failed: r.endedBy === 'failure',
				ending: r.endedBy === 'failure' ? 'failure' : 'planned',
				source: r.source,
				workOrder: null
			});
		const chain = [...(fittings.get(equipmentId) ?? [])];
		const last = [...own]
			.sort((a, b) =>
				a.removedOn < b.removedOn ? -1 : a.removedOn > b.removedOn ? 1 : a.auditSeq - b.auditSeq
			)
			.at(-1);
		if (last)
			chain.push({
				at: startOfLocalDay(last.removedOn, site.timeZone)!,
				day: last.removedOn,
				materialCode: last.materialCode,
				from: `fitted at the removal recorded in ${last.source}`,
				workOrder: null
			});
		chain.sort((a, b) => a.at.getTime() - b.at.getTime());
		for (const [i, fitted] of chain.entries()) {
			const next = chain[i + 1];
			// A carried-over fitting after a Countersign one: the carried-over rows cover that span.
			if (next && !next.workOrder) continue;
			const fittedWords = fitted.workOrder ? `fitted by ${fitted.from}` : fitted.from;
			if (next) {
				const ending = endingOfKind(next.workOrder!.kind);
				lives.push({
					...base(equipmentId),
					materialCode: fitted.materialCode,
					fittedOn: fitted.day,
					removedOn: next.day,
					cycles: cyclesBetween(equipmentId, fitted.at, next.at),
					days: daysBetween(fitted.day, next.day),
					failed: ending === 'failure',
					ending,
					source: `Countersign: ${fittedWords}; removed by ${next.from} (${kindWords[next.workOrder!.kind] ?? next.workOrder!.kind})`,
					workOrder: { id: next.workOrder!.id, number: next.workOrder!.number }
				});
			} else
				lives.push({
					...base(equipmentId),
					materialCode: fitted.materialCode,
					fittedOn: fitted.day,
					removedOn: null,
					cycles: cyclesBetween(equipmentId, fitted.at, null),
					days: Math.max(daysBetween(fitted.day, today), 0),
					failed: false,
					ending: 'in_service',
					source: `In service: ${fittedWords}; SIP cycles from the usage counter`,
					workOrder: null
				});
		}
	}
	lives.sort((a, b) => (a.tag < b.tag ? -1 : a.tag > b.tag ? 1 : a.fittedOn < b.fittedOn ? -1 : 1));
	return { today, lives };
}

// ── Groups, the fit, the plot ────────────────────────────────────────────────

export type GroupSummary = {
	key: string;
	equipmentClass: string;
	classLabel: string;
	materialCode: string;
	n: number;
	failures: number;
	censored: number;
};

export function groupsOf(lives: readonly DiaphragmLife[]): GroupSummary[] {
	const groups = new Map<string, GroupSummary>();
	for (const l of lives) {
		const key = groupKey(l.equipmentClass, l.materialCode);
		const g = groups.get(key) ?? {
			key,
			equipmentClass: l.equipmentClass,
			classLabel: classLabel(l.equipmentClass),
			materialCode: l.materialCode,
			n: 0,
			failures: 0,
			censored: 0
		};
		g.n++;
		if (l.failed) g.failures++;
		else g.censored++;
		groups.set(key, g);
	}
	return [...groups.values()].sort(
		(a, b) =>
			a.classLabel.localeCompare(b.classLabel) || a.materialCode.localeCompare(b.materialCode)
	);
}

export const lifeIn = (l: Pick<DiaphragmLife, 'cycles' | 'days'>, unit: LifeUnit) =>
	unit === 'cycles' ? l.cycles : l.days;

/** The lives that enter a fit: every life longer than zero in the unit. */
export function observationsOf(lives: readonly DiaphragmLife[], unit: LifeUnit): Observation[] {
	return lives.map((l) => ({ time: lifeIn(l, unit), failed: l.failed })).filter((o) => o.time > 0);
}

export type PlotPoint = { t: number; r: number; failed: boolean; tag: string };

/**
 * Each observed life at its modified Kaplan–Meier (product-limit) estimate of R(t): ordered by
 * time (failures before lives censored at the same time); at the i-th of n a failure multiplies
 * R by (n − i + 0.7)/(n − i + 1.7) instead of the plain (n − i)/(n − i + 1), so that the last
 * failure does not fall to R = 0 (NIST/SEMATECH e-Handbook, the Kaplan–Meier section of §8.2;
 * the factor from memory). A censored life is drawn at the estimate where it stands.
 */
export function kaplanMeier(points: readonly { t: number; failed: boolean; tag: string }[]) {
	const sorted = [...points].sort((a, b) => a.t - b.t || Number(b.failed) - Number(a.failed));
	const n = sorted.length;
	let r = 1;
	return sorted.map((p, i): PlotPoint => {
		const k = n - (i + 1);
		if (p.failed) r *= (k + 0.7) / (k + 1.7);
		return { t: p.t, r, failed: p.failed, tag: p.tag };
	});
}

/**
 * describeFit's rounding (src/lib/calc/weibull.ts, not exported there): `digits` significant
 * figures, down, up or to the nearest, so the figures shown beside its words are the same.
 */
function roundTo(x: number, digits: number, mode: 'floor' | 'ceil' | 'round'): number {
	if (!(x > 0)) return 0;
	const step = 10 ** (Math.floor(Math.log10(Math.abs(x))) - digits + 1);
	const nudge = mode === 'floor' ? 1e-9 : mode === 'ceil' ? -1e-9 : 0;
	const k = Math[mode](x / step + nudge);
	return Number((k * step).toPrecision(Math.max(digits, 1) + 1));
}

const lowerFirst = (text: string) => text.charAt(0).toLowerCase() + text.slice(1);

/** ψ(x) = d ln Γ(x)/dx, by a central difference of logGamma (ample for bounds). */
const digamma = (x: number) => {
	const h = 1e-5;
	return (logGamma(x + h) - logGamma(x - h)) / (2 * h);
};

export type FitFigures = {
	beta: number;
	eta: number;
	meanLife: number;
	/** Approximate 95 % bounds of the mean life: delta method on ln(η·Γ(1 + 1/β)), as weibull.ts does for a life. */
	meanBounds: Bounds;
	betaBounds: Bounds;
	etaBounds: Bounds;
	r: number;
	n: number;
	logLikelihood: number;
	longest: number;
};

export type Suggestion =
	| {
			ok: true;
			reliability: number;
			life: number;
			lower: number;
			upper: number;
			/** The figures as describeFit writes them: rounded, the lower bound down, the upper up. */
			shown: { life: number; lower: number; upper: number };
			words: string;
	  }
	| { ok: false; reliability: number; message: string };

export type GroupFit = {
	unit: LifeUnit;
	/** Lives of zero in this unit, listed but left out of the fit. */
	leftOut: number;
	fit: { ok: true; value: FitFigures } | { ok: false; message: string };
	suggestion: Suggestion | null;
	/** The fitted R(t), 0 ≤ t ≤ the plot's end. */
	curve: { t: number; r: number }[];
	points: PlotPoint[];
};

/** The fit of one group's lives in one unit, with the interval at `reliability` (0–1) and the plot's points. */
export function fitGroup(
	lives: readonly DiaphragmLife[],
	unit: LifeUnit,
	reliability: number
): GroupFit {
	const used = lives.filter((l) => lifeIn(l, unit) > 0);
	const points = kaplanMeier(
		used.map((l) => ({ t: lifeIn(l, unit), failed: l.failed, tag: l.tag }))
	);
	const leftOut = lives.length - used.length;
	const fitted = fitWeibull(observationsOf(lives, unit));
	if (!fitted.ok)
		return {
			unit,
			leftOut,
			fit: {
				ok: false,
				message: used.length
					? `No fit yet: ${lowerFirst(fitted.message.replace(/^Enter at least two recorded failures: /, ''))}`
					: 'No fit yet: there are no lives of this group to fit.'
			},
			suggestion: null,
			curve: [],
			points
		};
	const f = fitted.value;
	const k = -digamma(1 + 1 / f.beta) / f.beta; // d ln(mean) / d ln β
	const varMean = f.covLog.lnEta + k * k * f.covLog.lnBeta + 2 * k * f.covLog.cross;
	const seMean = Math.sqrt(Math.max(varMean, 0));
	const life = lifeAtReliability(f, reliability);
	const digits = f.r >= 15 ? 3 : 2; // as describeFit rounds
	const suggestion: Suggestion = life.ok
		? {
				ok: true,
				reliability,
				...life.value,
				shown: {
					life: roundTo(life.value.life, digits, 'round'),
					lower: roundTo(life.value.lower, digits, 'floor'),
					upper: roundTo(life.value.upper, digits, 'ceil')
				},
				words: describeFit(f, reliability, lifeUnitWords[unit], 'diaphragms')
			}
		: { ok: false, reliability, message: life.message };
	// The plot runs a little past the longest life, or past the interval's upper bound when that is
	// not far beyond it.
	const end =
		1.1 *
		Math.max(
			f.longest,
			life.ok && life.value.upper < 3 * f.longest ? life.value.upper : 0,
			life.ok ? life.value.life : 0
		);
	const steps = 120;
	const curve = Array.from({ length: steps + 1 }, (_, i) => {
		const t = (end * i) / steps;
		return { t, r: Math.exp(-((t / f.eta) ** f.beta)) };
	});
	return {
		unit,
		leftOut,
		fit: {
			ok: true,
			value: {
				beta: f.beta,
				eta: f.eta,
				meanLife: f.meanLife,
				meanBounds: {
					lower: f.meanLife * Math.exp(-Z95 * seMean),
					upper: f.meanLife * Math.exp(Z95 * seMean)
				},
				betaBounds: f.betaBounds,
				etaBounds: f.etaBounds,
				r: f.r,
				n: f.n,
				logLikelihood: f.logLikelihood,
				longest: f.longest
			}
		},
		suggestion,
		curve,
		points
	};
}

// ── The page's query ─────────────────────────────────────────────────────────

export type ReliabilityQuery = {
	group: string | null;
	/** Per cent: one of reliabilityChoices. */
	reliability: number;
	unit: LifeUnit;
};

/** The page's query parameters checked: the values, or the message saying what is wrong. */
export function readQuery(
	params: URLSearchParams
): { ok: true; value: ReliabilityQuery } | { ok: false; message: string } {
	for (const name of ['group', 'reliability', 'unit'])
		if (params.getAll(name).length > 1)
			return { ok: false, message: `Give “${name}” once only in the address.` };
	const group = params.get('group');
	const reliabilityText = params.get('reliability');
	const unit = params.get('unit') ?? 'cycles';
	if (group !== null && (group.length === 0 || group.length > 200 || !group.includes(':')))
		return {
			ok: false,
			message:
				'The group in the address is not one Countersign knows: choose an equipment class and diaphragm material from the list.'
		};
	const reliability =
		reliabilityText === null || reliabilityText === ''
			? DEFAULT_RELIABILITY
			: Number(reliabilityText);
	if (!(reliabilityChoices as readonly number[]).includes(reliability))
		return {
			ok: false,
			message: `The reliability must be one of ${reliabilityChoices.join(', ')} %; “${(reliabilityText ?? '').slice(0, 40)}” is not.`
		};
	if (!(lifeUnits as readonly string[]).includes(unit))
		return {
			ok: false,
			message: `Count the life in SIP cycles (unit=cycles) or in days (unit=days); “${unit.slice(0, 40)}” is neither.`
		};
	return { ok: true, value: { group, reliability, unit: unit as LifeUnit } };
}

/** Everything the Diaphragm life page shows for one group, unit and reliability. */
export async function reliabilityView(query: ReliabilityQuery, now = new Date()) {
	const { today, lives } = await diaphragmLives(now);
	const groups = groupsOf(lives);
	// By default the first group that can be fitted, else the first.
	const chosen =
		query.group === null
			? (groups.find(
					(g) => fitWeibull(observationsOf(livesOfGroup(lives, g.key), query.unit)).ok
				) ?? groups[0])
			: groups.find((g) => g.key === query.group);
	if (query.group !== null && !chosen)
		return {
			today,
			groups,
			problem:
				'There are no diaphragm lives for that equipment class and material: choose a group from the list.',
			group: null
		} as const;
	if (!chosen) return { today, groups, problem: null, group: null } as const;
	const own = livesOfGroup(lives, chosen.key);
	return {
		today,
		groups,
		problem: null,
		group: {
			...chosen,
			lives: own,
			fit: fitGroup(own, query.unit, query.reliability / 100)
		}
	} as const;
}

const livesOfGroup = (lives: readonly DiaphragmLife[], key: string) =>
	lives.filter((l) => groupKey(l.equipmentClass, l.materialCode) === key);

// ── Carrying lives over ──────────────────────────────────────────────────────

export type PartLifeInput = {
	equipmentId: string;
	materialCode: string;
	fittedOn: string;
	removedOn: string;
	sipCycles: number;
	endedBy: 'failure' | 'planned';
	source: string;
};

/**
 * One diaphragm life carried over from the records kept before Countersign (a Planner, or a
 * system job such as the demo seed), with its audit event on the equipment.
 */
export async function recordPartLife(
	by: Recorder,
	input: PartLifeInput,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'record diaphragm lives', {
		type: 'equipment',
		id: input.equipmentId
	});
	const site = await siteOrFail();
	const today = siteToday(site.timeZone);
	if (!isDay(input.fittedOn)) throw new RecordError('Give the day it was fitted.', 'fittedOn');
	if (!isDay(input.removedOn)) throw new RecordError('Give the day it was removed.', 'removedOn');
	if (input.removedOn < input.fittedOn)
		throw new RecordError('It cannot have been removed before it was fitted.', 'removedOn');
	if (input.removedOn > today)
		throw new RecordError('The removal cannot be after today at the site.', 'removedOn');
	if (!Number.isSafeInteger(input.sipCycles) || input.sipCycles < 0)
		throw new RecordError('The SIP cycles are a whole number, zero or more.', 'sipCycles');
	if (input.endedBy !== 'failure' && input.endedBy !== 'planned')
		throw new RecordError('Say whether it failed or was replaced as planned.', 'endedBy');
	const materialCode = input.materialCode.trim();
	const source = input.source.trim();
	if (!materialCode || materialCode.length > 40)
		throw new RecordError('Give the material code (at most 40 characters).', 'materialCode');
	if (!source || source.length > 200)
		throw new RecordError('Say where the record comes from (at most 200 characters).', 'source');
	const [e] = await db()
		.select({ siteId: equipment.siteId })
		.from(equipment)
		.where(eq(equipment.id, input.equipmentId));
	if (!e || e.siteId !== site.id)
		throw new RecordError('Choose equipment of this site.', 'equipmentId');
	const id = randomUUID();
	const values = { ...input, materialCode, source };
	await db().transaction(async (tx) => {
		const rec = await appendRecordEvent(tx, by, {
			action: 'part_life.record',
			entityType: 'equipment',
			entityId: input.equipmentId,
			newValues: { partLifeRecord: id, ...values },
			clientAddress
		});
		await tx.insert(partLifeRecords).values({ id, ...values, ...rec });
	});
	return { id };
}
