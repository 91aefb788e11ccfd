import { and, asc, desc, eq, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import {
	attributeSchemas,
	equipmentStatuses,
	equipmentStatusLabels,
	usageKinds,
	usageKindLabels,
	type EquipmentClass,
	type EquipmentDetails,
	type EquipmentStatus,
	type UsageKind
} from '$lib/equipment';
import { db, type Transaction } from './db/index';
import {
	areas,
	buildings,
	equipment,
	equipmentStatusChanges,
	equipmentUsage,
	equipmentVersions
} from './db/schema/index';
import {
	appendRecordEvent,
	isUniqueViolation,
	mustHold,
	needReason,
	nextVersion,
	oneAtATime,
	RecordError,
	type Recorder
} from './records';

/**
 * The equipment register (4/10, MR2): identity (tag), versions of its master data, status
 * changes and usage records, all append-only. Status and counters are derived from the rows.
 */

export type EquipmentListFilter = {
	q?: string;
	areaId?: string;
	equipmentClass?: EquipmentClass;
	status?: EquipmentStatus;
	sort?: 'tag' | 'area' | 'class' | 'status';
};

type ListRow = {
	id: string;
	tag: string;
	version: number;
	description: string;
	equipmentClass: EquipmentClass;
	gmpCritical: boolean;
	areaId: string;
	areaCode: string;
	areaName: string;
	status: EquipmentStatus;
	sipCycles: number;
	operatingHours: number;
};

/** The register of a site: each piece of equipment at its newest version, with status and counters. */
export async function listEquipment(siteId: string, filter: EquipmentListFilter = {}) {
	const q = filter.q?.trim().toLowerCase() ?? '';
	const like = `%${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
	// "xv 31" and "xv31" find XV-3101: tags are matched without their hyphens and spaces too.
	const compact = `%${q.replace(/[\s-]+/g, '').replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
	const order = {
		tag: sql`e.tag`,
		area: sql`a.code, e.tag`,
		class: sql`v.equipment_class, e.tag`,
		status: sql`s.status, e.tag`
	}[filter.sort ?? 'tag'];
	const rows = (await db().execute(sql`
		select e.id, e.tag, v.version, v.description, v.equipment_class as "equipmentClass",
			v.gmp_critical as "gmpCritical", a.id as "areaId", a.code as "areaCode", a.name as "areaName",
			coalesce(s.status, 'in_service') as status,
			coalesce(u.sip, 0)::float8 as "sipCycles", coalesce(u.hours, 0)::float8 as "operatingHours"
		from ${equipment} e
		join lateral (select * from ${equipmentVersions} where equipment_id = e.id order by version desc limit 1) v on true
		join ${areas} a on a.id = v.area_id
		left join lateral (select status from ${equipmentStatusChanges} where equipment_id = e.id order by audit_seq desc limit 1) s on true
		left join lateral (
			select sum(amount) filter (where kind = 'sip_cycles') as sip,
				sum(amount) filter (where kind = 'operating_hours') as hours
			from ${equipmentUsage} where equipment_id = e.id) u on true
		where e.site_id = ${siteId}
			${
				q
					? sql`and (lower(e.tag) like ${like} or translate(lower(e.tag), '- ', '') like ${compact}
				or lower(v.description) like ${like} or lower(v.attributes::text) like ${like})`
					: sql``
			}
			${filter.areaId ? sql`and a.id = ${filter.areaId}` : sql``}
			${filter.equipmentClass ? sql`and v.equipment_class = ${filter.equipmentClass}` : sql``}
			${filter.status ? sql`and coalesce(s.status, 'in_service') = ${filter.status}` : sql``}
		order by ${order}`)) as unknown as ListRow[];
	return rows.map((r) => ({ ...r, version: Number(r.version) }));
}

/** The areas of a site for choosing where equipment sits. */
export function areasOf(siteId: string) {
	return db()
		.select({ id: areas.id, code: areas.code, name: areas.name, buildingCode: buildings.code })
		.from(areas)
		.innerJoin(buildings, eq(buildings.id, areas.buildingId))
		.where(eq(buildings.siteId, siteId))
		.orderBy(asc(buildings.code), asc(areas.code));
}

export async function findByTag(tag: string) {
	const [row] = await db()
		.select({ id: equipment.id })
		.from(equipment)
		.where(eq(equipment.tag, tag.toUpperCase()));
	return row?.id;
}

/** One piece of equipment: identity, every version (newest first), status, counters and its log. */
export async function getEquipment(id: string) {
	const [identity] = await db().select().from(equipment).where(eq(equipment.id, id));
	if (!identity) return undefined;
	const versions = await db()
		.select({
			version: equipmentVersions.version,
			areaId: equipmentVersions.areaId,
			areaCode: areas.code,
			areaName: areas.name,
			equipmentClass: equipmentVersions.equipmentClass,
			description: equipmentVersions.description,
			gmpCritical: equipmentVersions.gmpCritical,
			attributes: equipmentVersions.attributes,
			reason: equipmentVersions.reason,
			recordedByName: equipmentVersions.recordedByName,
			recordedAt: equipmentVersions.recordedAt,
			auditSeq: equipmentVersions.auditSeq
		})
		.from(equipmentVersions)
		.innerJoin(areas, eq(areas.id, equipmentVersions.areaId))
		.where(eq(equipmentVersions.equipmentId, id))
		.orderBy(desc(equipmentVersions.version));
	const statuses = await db()
		.select()
		.from(equipmentStatusChanges)
		.where(eq(equipmentStatusChanges.equipmentId, id))
		.orderBy(desc(equipmentStatusChanges.auditSeq));
	const usage = await db()
		.select()
		.from(equipmentUsage)
		.where(eq(equipmentUsage.equipmentId, id))
		.orderBy(desc(equipmentUsage.auditSeq));
	const total = (kind: UsageKind) =>
		usage.filter((u) => u.kind === kind).reduce((sum, u) => sum + u.amount, 0);

	type LogEntry = {
		at: Date;
		seq: number;
		kind: 'version' | 'status' | 'usage';
		title: string;
		detail: string;
		by: string;
	};
	const log: LogEntry[] = [
		...versions.map((v) => ({
			at: v.recordedAt,
			seq: v.auditSeq,
			kind: 'version' as const,
			title:
				v.version === 1 ? 'Registered (version 1)' : `Master data changed (version ${v.version})`,
			detail: v.reason ?? '',
			by: v.recordedByName
		})),
		...statuses.map((s) => ({
			at: s.recordedAt,
			seq: s.auditSeq,
			kind: 'status' as const,
			title: `Status: ${equipmentStatusLabels[s.status as EquipmentStatus] ?? s.status}`,
			detail: s.reason,
			by: s.recordedByName
		})),
		...usage.map((u) => ({
			at: u.recordedAt,
			seq: u.auditSeq,
			kind: 'usage' as const,
			title: `${usageKindLabels[u.kind as UsageKind] ?? u.kind}: +${u.amount}`,
			detail: u.note,
			by: u.recordedByName
		}))
	].sort((a, b) => b.seq - a.seq || b.at.getTime() - a.at.getTime());

	return {
		id: identity.id,
		tag: identity.tag,
		current: versions[0]!,
		versions,
		status: (statuses[0]?.status ?? 'in_service') as EquipmentStatus,
		statuses,
		counters: { sipCycles: total('sip_cycles'), operatingHours: total('operating_hours') },
		log
	};
}

function checkAttributes(details: Omit<EquipmentDetails, 'tag'>) {
	const parsed = attributeSchemas[details.equipmentClass].safeParse(details.attributes);
	if (!parsed.success) throw new RecordError('The attributes do not fit the class.', 'attributes');
	return parsed.data as Record<string, unknown>;
}

async function areaOfSite(tx: Transaction, areaId: string, siteId: string) {
	const [row] = await tx
		.select({ id: areas.id })
		.from(areas)
		.innerJoin(buildings, eq(buildings.id, areas.buildingId))
		.where(and(eq(areas.id, areaId), eq(buildings.siteId, siteId)));
	if (!row) throw new RecordError('Choose an area of this site.', 'areaId');
}

/** Registers new equipment: identity, version 1 and the status In service, with one audit event each. */
export async function registerEquipment(
	by: Recorder,
	siteId: string,
	details: EquipmentDetails,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'register equipment');
	const attributes = checkAttributes(details);
	const id = randomUUID();
	try {
		await db().transaction(async (tx) => {
			await areaOfSite(tx, details.areaId, siteId);
			const newValues = {
				tag: details.tag,
				version: 1,
				areaId: details.areaId,
				equipmentClass: details.equipmentClass,
				description: details.description,
				gmpCritical: details.gmpCritical,
				attributes
			};
			const rec = await appendRecordEvent(tx, by, {
				action: 'equipment.register',
				entityType: 'equipment',
				entityId: id,
				newValues,
				clientAddress
			});
			await tx
				.insert(equipment)
				.values({ id, siteId, tag: details.tag, createdAt: rec.recordedAt });
			await tx.insert(equipmentVersions).values({
				id: randomUUID(),
				equipmentId: id,
				version: 1,
				areaId: details.areaId,
				equipmentClass: details.equipmentClass,
				description: details.description,
				gmpCritical: details.gmpCritical,
				attributes,
				reason: null,
				...rec
			});
			await setStatus(tx, by, id, 'in_service', 'Registered', null, clientAddress);
		});
	} catch (e) {
		if (isUniqueViolation(e))
			throw new RecordError(`The tag ${details.tag} is already registered.`, 'tag', 409);
		throw e;
	}
	return id;
}

/**
 * Changes master data: a new version with a reason; the old version stays. `fromVersion` is the
 * version the person saw: if someone changed it meanwhile, the change is refused (409) rather
 * than silently overwriting theirs.
 */
export async function changeEquipment(
	by: Recorder,
	id: string,
	fromVersion: number,
	details: Omit<EquipmentDetails, 'tag'>,
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'change equipment');
	needReason(reason);
	const attributes = checkAttributes(details);
	const [identity] = await db().select().from(equipment).where(eq(equipment.id, id));
	if (!identity) throw new RecordError('No such equipment.', undefined, 404);
	return oneAtATime('equipment_versions_number', () =>
		db().transaction(async (tx) => {
			await areaOfSite(tx, details.areaId, identity.siteId);
			const [latest] = await tx
				.select()
				.from(equipmentVersions)
				.where(eq(equipmentVersions.equipmentId, id))
				.orderBy(desc(equipmentVersions.version))
				.limit(1);
			const pick = (v: Omit<EquipmentDetails, 'tag'>) => ({
				areaId: v.areaId,
				equipmentClass: v.equipmentClass,
				description: v.description,
				gmpCritical: v.gmpCritical,
				attributes: v.attributes
			});
			const next = pick({ ...details, attributes });
			const { version, rec } = await nextVersion(tx, by, {
				latest,
				fromVersion,
				what: 'equipment',
				before: latest ? pick(latest as Omit<EquipmentDetails, 'tag'>) : {},
				next,
				action: 'equipment.change',
				entityType: 'equipment',
				entityId: id,
				reason,
				clientAddress
			});
			await tx
				.insert(equipmentVersions)
				.values({ id: randomUUID(), equipmentId: id, version, ...next, reason, ...rec });
			return version;
		})
	);
}

/**
 * A status change with its reason, inside the caller's transaction: by hand (Quality puts
 * equipment into or out of quarantine) or from a work order (5/10: start, execution, release).
 */
export async function setStatus(
	tx: Transaction,
	by: Recorder,
	equipmentId: string,
	status: EquipmentStatus,
	reason: string,
	source: { type: string; id: string } | null,
	clientAddress: string | null = null
) {
	if (!equipmentStatuses.includes(status)) throw new RecordError('Unknown status.', 'status');
	// One status change of a piece of equipment at a time (quarantine vs a work order's start).
	await lockEquipment(tx, equipmentId);
	const [previous] = await tx
		.select({ status: equipmentStatusChanges.status })
		.from(equipmentStatusChanges)
		.where(eq(equipmentStatusChanges.equipmentId, equipmentId))
		.orderBy(desc(equipmentStatusChanges.auditSeq))
		.limit(1);
	const rec = await appendRecordEvent(tx, by, {
		action: 'equipment.status_change',
		entityType: 'equipment',
		entityId: equipmentId,
		newValues: { status, source },
		previousValues: previous ? { status: previous.status } : null,
		reason,
		clientAddress
	});
	await tx.insert(equipmentStatusChanges).values({
		id: randomUUID(),
		equipmentId,
		status,
		reason,
		sourceType: source?.type ?? null,
		sourceId: source?.id ?? null,
		...rec
	});
}

/**
 * Quarantine and its end, by Quality with a reason. Work-order statuses (out of service,
 * awaiting release) come only from work orders (5/10), never by hand.
 */
export async function changeQuarantine(
	by: Recorder,
	equipmentId: string,
	quarantine: boolean,
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['quality'], 'quarantine equipment or end a quarantine');
	needReason(reason);
	await db().transaction(async (tx) => {
		await lockEquipment(tx, equipmentId);
		const [latest] = await tx
			.select({ status: equipmentStatusChanges.status })
			.from(equipmentStatusChanges)
			.where(eq(equipmentStatusChanges.equipmentId, equipmentId))
			.orderBy(desc(equipmentStatusChanges.auditSeq))
			.limit(1);
		if (!latest) throw new RecordError('No such equipment.', undefined, 404);
		if (quarantine && latest.status === 'quarantined')
			throw new RecordError('This equipment is already quarantined.', 'reason', 409);
		if (!quarantine && latest.status !== 'quarantined')
			throw new RecordError('This equipment is not quarantined.', 'reason', 409);
		if (quarantine && latest.status !== 'in_service')
			throw new RecordError(
				'Only equipment in service can be quarantined by hand; equipment under work follows its work order.',
				'reason',
				409
			);
		await setStatus(
			tx,
			by,
			equipmentId,
			quarantine ? 'quarantined' : 'in_service',
			reason,
			null,
			clientAddress
		);
	});
}

/** The equipment's status lock (a work order's start takes it before reading the status). */
export async function lockEquipment(tx: Transaction, equipmentId: string) {
	await tx.execute(
		sql`select pg_advisory_xact_lock(hashtextextended(${'equipment:' + equipmentId}, 0))`
	);
}

/** A usage record (steam-in-place cycles or operating hours) added to the counter. */
export async function recordUsage(
	tx: Transaction,
	by: Recorder,
	equipmentId: string,
	usage: { kind: UsageKind; amount: number; occurredAt: Date; note: string },
	clientAddress: string | null = null
) {
	if (!usageKinds.includes(usage.kind)) throw new RecordError('Unknown usage kind.', 'kind');
	if (!Number.isFinite(usage.amount) || usage.amount <= 0 || usage.amount > 1_000_000)
		throw new RecordError('A usage record adds a positive amount.', 'amount');
	if (Number.isNaN(usage.occurredAt.getTime()))
		throw new RecordError('Give the time of the usage.', 'occurredAt');
	const rec = await appendRecordEvent(tx, by, {
		action: 'equipment.usage',
		entityType: 'equipment',
		entityId: equipmentId,
		newValues: { ...usage, occurredAt: usage.occurredAt.toISOString() },
		clientAddress
	});
	await tx.insert(equipmentUsage).values({ id: randomUUID(), equipmentId, ...usage, ...rec });
}
