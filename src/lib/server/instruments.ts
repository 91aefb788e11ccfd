import { asc, desc, eq, inArray } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { addDays, instrumentFitnessOn, siteToday, type CalibrationFacts } from '$lib/fitness';
import { currentSite } from './plant';
import type { z } from 'zod';
import type { calibrationSchema, registerInstrumentSchema } from '$lib/schemas/master';
import { db } from './db/index';
import { calibrations, instruments, instrumentVersions } from './db/schema/index';
import {
	appendRecordEvent,
	isUniqueViolation,
	mustHold,
	needReason,
	nextVersion,
	oneAtATime,
	notInFuture,
	RecordError,
	type Recorder
} from './records';

/**
 * Reference instruments (4/10, MR3): identity, versions (kind, range, unit, U95, withdrawn) and
 * append-only calibration records. Whether one is usable on a day comes from $lib/fitness.
 */
type Details = Omit<z.infer<typeof registerInstrumentSchema>, 'code'>;
export type Calibration = z.infer<typeof calibrationSchema>;

const factsOf = (c: typeof calibrations.$inferSelect): CalibrationFacts => ({
	performedOn: c.performedOn,
	dueOn: c.dueOn,
	asLeft: c.asLeft as 'pass' | 'fail',
	seq: c.auditSeq
});

const siteZone = async () => (await currentSite())?.timeZone ?? 'UTC';

/**
 * Whether the instrument was withdrawn on `day`: the version in force that day decides (the
 * newest recorded on or before it, in site dates), so a withdrawal does not reach back to work
 * done before it. Versions come newest first.
 */
function retiredOn(
	versions: { retired: boolean; recordedAt: Date }[],
	day: string,
	timeZone: string
): boolean {
	const inForce = versions.find((v) => siteToday(timeZone, v.recordedAt) <= day) ?? versions.at(-1);
	return inForce?.retired ?? false;
}

/** Every instrument of a site at its newest version, with its fitness on `day` and what falls due within 30 days. */
export async function listInstruments(siteId: string, day: string) {
	const timeZone = await siteZone();
	const ids = await db()
		.select({ id: instruments.id, code: instruments.code })
		.from(instruments)
		.where(eq(instruments.siteId, siteId))
		.orderBy(asc(instruments.code));
	if (!ids.length) return [];
	const versions = await db()
		.select()
		.from(instrumentVersions)
		.where(
			inArray(
				instrumentVersions.instrumentId,
				ids.map((i) => i.id)
			)
		)
		.orderBy(desc(instrumentVersions.version));
	const cals = await db()
		.select()
		.from(calibrations)
		.where(
			inArray(
				calibrations.instrumentId,
				ids.map((i) => i.id)
			)
		);
	const soon = addDays(day, 30);
	return ids.map(({ id, code }) => {
		const v = versions.find((x) => x.instrumentId === id)!;
		const fitness = instrumentFitnessOn(
			cals.filter((c) => c.instrumentId === id).map(factsOf),
			day,
			retiredOn(
				versions.filter((x) => x.instrumentId === id),
				day,
				timeZone
			)
		);
		const dueOn = fitness.calibration?.dueOn ?? null;
		return {
			id,
			code,
			version: v.version,
			kind: v.kind,
			description: v.description,
			range: { min: v.rangeMin, max: v.rangeMax },
			unit: v.unit,
			uncertaintyU95: v.uncertaintyU95,
			retired: v.retired,
			fitness,
			dueOn,
			dueSoon: fitness.usable && dueOn !== null && dueOn <= soon
		};
	});
}

export async function getInstrument(id: string, day: string) {
	const timeZone = await siteZone();
	const [identity] = await db().select().from(instruments).where(eq(instruments.id, id));
	if (!identity) return undefined;
	const versions = await db()
		.select()
		.from(instrumentVersions)
		.where(eq(instrumentVersions.instrumentId, id))
		.orderBy(desc(instrumentVersions.version));
	const cals = await db()
		.select()
		.from(calibrations)
		.where(eq(calibrations.instrumentId, id))
		.orderBy(desc(calibrations.performedOn), desc(calibrations.auditSeq));
	const current = versions[0]!;
	return {
		id,
		code: identity.code,
		siteId: identity.siteId,
		current,
		versions,
		calibrations: cals,
		fitness: instrumentFitnessOn(cals.map(factsOf), day, retiredOn(versions, day, timeZone))
	};
}

/** Whether an instrument may be used on a day (site date): the server's check before any entry (5/10). */
export async function instrumentFitness(id: string, day: string) {
	const found = await getInstrument(id, day);
	if (!found) throw new RecordError('No such instrument.', undefined, 404);
	return found.fitness;
}

/** The instruments that may be used on `day`, optionally of one kind: the only ones a step offers. */
export async function usableInstruments(siteId: string, day: string, kind?: string) {
	return (await listInstruments(siteId, day)).filter(
		(i) => i.fitness.usable && (!kind || i.kind.toLowerCase() === kind.toLowerCase())
	);
}

export async function registerInstrument(
	by: Recorder,
	siteId: string,
	input: Details & { code: string },
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'register reference instruments');
	const id = randomUUID();
	const { code, ...details } = input;
	try {
		await db().transaction(async (tx) => {
			const rec = await appendRecordEvent(tx, by, {
				action: 'instrument.register',
				entityType: 'instrument',
				entityId: id,
				newValues: { code, version: 1, ...details },
				clientAddress
			});
			await tx.insert(instruments).values({ id, siteId, code, createdAt: rec.recordedAt });
			await tx.insert(instrumentVersions).values({
				id: randomUUID(),
				instrumentId: id,
				version: 1,
				...details,
				reason: null,
				...rec
			});
		});
	} catch (e) {
		if (isUniqueViolation(e))
			throw new RecordError(`The instrument id ${code} is already registered.`, 'code', 409);
		throw e;
	}
	return id;
}

export async function changeInstrument(
	by: Recorder,
	id: string,
	fromVersion: number,
	details: Details,
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'change reference instruments');
	needReason(reason);
	return oneAtATime('instrument_versions_number', () =>
		db().transaction(async (tx) => {
			const [latest] = await tx
				.select()
				.from(instrumentVersions)
				.where(eq(instrumentVersions.instrumentId, id))
				.orderBy(desc(instrumentVersions.version))
				.limit(1);
			const pick = (v: Details) => ({
				kind: v.kind,
				description: v.description,
				rangeMin: v.rangeMin,
				rangeMax: v.rangeMax,
				unit: v.unit,
				uncertaintyU95: v.uncertaintyU95,
				retired: v.retired
			});
			const next = pick(details);
			const { version, rec } = await nextVersion(tx, by, {
				latest,
				fromVersion,
				what: 'instrument',
				before: latest ? pick(latest) : {},
				next,
				action: 'instrument.change',
				entityType: 'instrument',
				entityId: id,
				reason,
				clientAddress
			});
			await tx
				.insert(instrumentVersions)
				.values({ id: randomUUID(), instrumentId: id, version, ...next, reason, ...rec });
			return version;
		})
	);
}

/** A calibration record: appended, never changed; a later record supersedes it. */
export async function recordCalibration(
	by: Recorder,
	instrumentId: string,
	calibration: Calibration,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner', 'quality'], 'record calibrations');
	const [identity] = await db().select().from(instruments).where(eq(instruments.id, instrumentId));
	if (!identity) throw new RecordError('No such instrument.', undefined, 404);
	await notInFuture(calibration.performedOn, 'performedOn', 'calibration date');
	await db().transaction(async (tx) => {
		const rec = await appendRecordEvent(tx, by, {
			action: 'instrument.calibration',
			entityType: 'instrument',
			entityId: instrumentId,
			newValues: { ...calibration },
			clientAddress
		});
		await tx
			.insert(calibrations)
			.values({ id: randomUUID(), instrumentId, ...calibration, ...rec });
	});
}
