import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import type { z } from 'zod';
import type { lotSchema } from '$lib/schemas/master';
import { db } from './db/index';
import { partLots, parts, partVersions } from './db/schema/index';
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
 * Parts and lots (4/10): a part (number, description, material code) is versioned; each lot
 * received is an append-only record. Consumption and the expiry check at use come with 5/10.
 */
type Details = { description: string; materialCode: string };
export type Lot = z.infer<typeof lotSchema>;

export async function listParts(siteId: string, q = '') {
	const all = await db()
		.select({ id: parts.id, partNumber: parts.partNumber })
		.from(parts)
		.where(eq(parts.siteId, siteId))
		.orderBy(asc(parts.partNumber));
	if (!all.length) return [];
	const ids = all.map((p) => p.id);
	const versions = await db()
		.select()
		.from(partVersions)
		.where(inArray(partVersions.partId, ids))
		.orderBy(desc(partVersions.version));
	const lots = await db().select().from(partLots).where(inArray(partLots.partId, ids));
	const needle = q.trim().toLowerCase();
	return all
		.map((p) => {
			const v = versions.find((x) => x.partId === p.id)!;
			const own = lots.filter((l) => l.partId === p.id);
			return {
				...p,
				version: v.version,
				description: v.description,
				materialCode: v.materialCode,
				lots: own.length,
				lotNumbers: own.map((l) => l.supplierLot)
			};
		})
		.filter(
			(p) =>
				!needle ||
				[p.partNumber, p.description, p.materialCode, ...p.lotNumbers].some((t) =>
					t.toLowerCase().includes(needle)
				)
		);
}

export async function getPart(id: string) {
	const [identity] = await db().select().from(parts).where(eq(parts.id, id));
	if (!identity) return undefined;
	const versions = await db()
		.select()
		.from(partVersions)
		.where(eq(partVersions.partId, id))
		.orderBy(desc(partVersions.version));
	const lots = await db()
		.select()
		.from(partLots)
		.where(eq(partLots.partId, id))
		.orderBy(desc(partLots.receivedOn), desc(partLots.auditSeq));
	return { id, partNumber: identity.partNumber, current: versions[0]!, versions, lots };
}

export async function registerPart(
	by: Recorder,
	siteId: string,
	input: Details & { partNumber: string },
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'register parts');
	const id = randomUUID();
	const { partNumber, ...details } = input;
	try {
		await db().transaction(async (tx) => {
			const rec = await appendRecordEvent(tx, by, {
				action: 'part.register',
				entityType: 'part',
				entityId: id,
				newValues: { partNumber, version: 1, ...details },
				clientAddress
			});
			await tx.insert(parts).values({ id, siteId, partNumber, createdAt: rec.recordedAt });
			await tx
				.insert(partVersions)
				.values({ id: randomUUID(), partId: id, version: 1, ...details, reason: null, ...rec });
		});
	} catch (e) {
		if (isUniqueViolation(e))
			throw new RecordError(
				`The part number ${partNumber} is already registered.`,
				'partNumber',
				409
			);
		throw e;
	}
	return id;
}

export async function changePart(
	by: Recorder,
	id: string,
	fromVersion: number,
	details: Details,
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'change parts');
	needReason(reason);
	return oneAtATime('part_versions_number', () =>
		db().transaction(async (tx) => {
			const [latest] = await tx
				.select()
				.from(partVersions)
				.where(eq(partVersions.partId, id))
				.orderBy(desc(partVersions.version))
				.limit(1);
			const pick = (v: Details) => ({ description: v.description, materialCode: v.materialCode });
			const next = pick(details);
			const { version, rec } = await nextVersion(tx, by, {
				latest,
				fromVersion,
				what: 'part',
				before: latest ? pick(latest) : {},
				next,
				action: 'part.change',
				entityType: 'part',
				entityId: id,
				reason,
				clientAddress
			});
			await tx
				.insert(partVersions)
				.values({ id: randomUUID(), partId: id, version, ...next, reason, ...rec });
			return version;
		})
	);
}

export async function receiveLot(
	by: Recorder,
	partId: string,
	lot: Lot,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'receive part lots');
	const [identity] = await db().select().from(parts).where(eq(parts.id, partId));
	if (!identity) throw new RecordError('No such part.', undefined, 404);
	await notInFuture(lot.receivedOn, 'receivedOn', 'date received');
	try {
		await db().transaction(async (tx) => {
			// "L25-0412" and "l25-0412" are one lot: refuse the second whatever its case.
			const same = await tx
				.select({ lot: partLots.supplierLot })
				.from(partLots)
				.where(
					and(
						eq(partLots.partId, partId),
						sql`lower(${partLots.supplierLot}) = lower(${lot.supplierLot})`
					)
				);
			if (same.length)
				throw new RecordError(
					`Lot ${same[0]!.lot} of this part is already recorded.`,
					'supplierLot',
					409
				);
			const rec = await appendRecordEvent(tx, by, {
				action: 'part.lot_receive',
				entityType: 'part',
				entityId: partId,
				newValues: { ...lot },
				clientAddress
			});
			await tx.insert(partLots).values({ id: randomUUID(), partId, ...lot, ...rec });
		});
	} catch (e) {
		if (isUniqueViolation(e))
			throw new RecordError(
				`Lot ${lot.supplierLot} of this part is already recorded.`,
				'supplierLot',
				409
			);
		throw e;
	}
}

/** Every lot of the site with its part's current material code: what a part-lot field offers (5/10). */
export async function lotsOfSite(siteId: string) {
	const rows = await db()
		.select({
			id: partLots.id,
			partId: partLots.partId,
			partNumber: parts.partNumber,
			supplierLot: partLots.supplierLot,
			expiresOn: partLots.expiresOn
		})
		.from(partLots)
		.innerJoin(parts, eq(parts.id, partLots.partId))
		.where(eq(parts.siteId, siteId))
		.orderBy(asc(parts.partNumber), asc(partLots.supplierLot));
	if (!rows.length) return [];
	const versions = await db()
		.select({ partId: partVersions.partId, materialCode: partVersions.materialCode })
		.from(partVersions)
		.where(
			inArray(
				partVersions.partId,
				rows.map((r) => r.partId)
			)
		)
		.orderBy(desc(partVersions.version));
	return rows.map((r) => ({
		...r,
		materialCode: versions.find((v) => v.partId === r.partId)!.materialCode
	}));
}
