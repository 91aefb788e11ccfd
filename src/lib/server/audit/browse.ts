import {
	and,
	asc,
	desc,
	eq,
	gt,
	gte,
	inArray,
	like,
	lt,
	lte,
	or,
	sql,
	type SQL
} from 'drizzle-orm';
import { z } from 'zod';
import { db } from '../db/index';
import { auditEvent, deviations, equipment, workOrders } from '../db/schema/index';

/**
 * The audit-trail browser's query (8/10): filters that live in the page's URL and in
 * GET /api/v1/audit's query string alike, paged by a seq cursor (never by offset: a page stays
 * the same however many events are appended meanwhile).
 */
const instant = (what: string) =>
	z.union([z.iso.datetime({ offset: true }), z.iso.date()], {
		error: `${what} is a date (2026-12-01) or a date and time with its zone (2026-12-01T08:00:00Z).`
	});
const word = (what: string, max: number) =>
	z
		.string()
		.trim()
		.max(max, `Keep ${what} under ${max} characters.`)
		.regex(/^[a-z][a-z_.]*$/, `${what} is lowercase words joined by dots or underscores.`);

export const auditQuerySchema = z.strictObject({
	from: instant('from').optional(),
	to: instant('to').optional(),
	person: z.uuid({ error: 'person is an account id.' }).optional(),
	action: word('action', 80).optional(),
	entityType: word('entityType', 40).optional(),
	equipment: z.string().trim().min(1).max(40, 'Keep the tag under 40 characters.').optional(),
	workOrder: z
		.string()
		.trim()
		.min(1)
		.max(40, 'Keep the work order under 40 characters.')
		.optional(),
	q: z.string().trim().min(1).max(200, 'Keep the search under 200 characters.').optional(),
	/** One record's History: `<kind>:<id>` (see recordScope). */
	record: z
		.string()
		.trim()
		.max(120, 'Keep the record under 120 characters.')
		.transform((v, ctx) => {
			const parsed = parseRecordRef(v);
			if (!parsed) {
				ctx.addIssue({ code: 'custom', message: recordRefMessage });
				return z.NEVER;
			}
			return parsed;
		})
		.optional(),
	/** The cursor: the seq of the last event of the page before. */
	after: z.coerce
		.number({ error: 'after is the seq of an event (a whole number from 1).' })
		.int('after is the seq of an event (a whole number from 1).')
		.positive('after is the seq of an event (a whole number from 1).')
		.max(Number.MAX_SAFE_INTEGER, 'after is too large.')
		.optional(),
	order: z.enum(['desc', 'asc'], { error: 'order is desc (newest first) or asc.' }).default('desc'),
	limit: z.coerce
		.number({ error: 'limit is a whole number from 1 to 200.' })
		.int('limit is a whole number from 1 to 200.')
		.min(1, 'limit is a whole number from 1 to 200.')
		.max(200, 'limit is a whole number from 1 to 200.')
		.default(50)
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;

/** The filters of a view (the query's names other than the paging ones). */
export const auditFilterNames = [
	'from',
	'to',
	'person',
	'action',
	'entityType',
	'equipment',
	'workOrder',
	'q',
	'record'
] as const;

/** The records that have a History (GLOSSARY): what each one's history holds is recordScope's. */
export const historyKinds = [
	'work_order',
	'step',
	'equipment',
	'procedure_version',
	'account'
] as const;
export type HistoryKind = (typeof historyKinds)[number];
export type RecordRef = { kind: HistoryKind; id: string };

const UUID_TEXT = '[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}';
const STEP_ID = new RegExp(`^${UUID_TEXT}:[a-z0-9][a-z0-9-]{0,39}$`);
const UUID = new RegExp(`^${UUID_TEXT}$`, 'i');
const recordRefMessage =
	'record is <kind>:<id>, the kind one of work_order, step, equipment, procedure_version, account; a step is step:<work order id>:<step key>.';

/** `<kind>:<id>` as a record reference, or null when it is not one. */
export function parseRecordRef(text: string): RecordRef | null {
	const at = text.indexOf(':');
	if (at < 0) return null;
	return recordRef(text.slice(0, at), text.slice(at + 1));
}

/** A kind and an id as a record reference (ids lowercased), or null when they are not one. */
export function recordRef(kind: string, rawId: string): RecordRef | null {
	const id = rawId.toLowerCase();
	if (!(historyKinds as readonly string[]).includes(kind)) return null;
	if (kind === 'step' ? !STEP_ID.test(id) : !UUID.test(id)) return null;
	return { kind: kind as HistoryKind, id };
}

/**
 * The events of one record's History, as a condition on the trail:
 * - a work order: its own events, its steps' signatures ("<id>:<step>") and its deviations';
 * - a step: the work order's events that name the step, the step's signatures, its deviations';
 * - equipment: its own events and those of every work order on it (the equipment log, MR2);
 * - a procedure version, an account: the events of that record.
 */
export async function recordScope(ref: RecordRef): Promise<SQL | undefined> {
	const ofWorkOrders = async (ids: string[]) => {
		if (!ids.length) return [];
		const devs = await db()
			.select({ id: deviations.id })
			.from(deviations)
			.where(inArray(deviations.workOrderId, ids));
		return [
			inArray(auditEvent.entityId, [...ids, ...devs.map((d) => d.id)]),
			...ids.map((id) => like(auditEvent.entityId, `${id}:%`))
		];
	};
	switch (ref.kind) {
		case 'work_order':
			return or(...(await ofWorkOrders([ref.id])));
		case 'step': {
			const [workOrderId, key] = ref.id.split(':') as [string, string];
			const devs = await db()
				.select({ id: deviations.id })
				.from(deviations)
				.where(and(eq(deviations.workOrderId, workOrderId), eq(deviations.stepKey, key)));
			return or(
				and(eq(auditEvent.entityId, workOrderId), sql`${auditEvent.newValues}->>'step' = ${key}`),
				eq(auditEvent.entityId, ref.id),
				devs.length
					? inArray(
							auditEvent.entityId,
							devs.map((d) => d.id)
						)
					: undefined
			);
		}
		case 'equipment': {
			const orders = await db()
				.select({ id: workOrders.id })
				.from(workOrders)
				.where(eq(workOrders.equipmentId, ref.id));
			return or(eq(auditEvent.entityId, ref.id), ...(await ofWorkOrders(orders.map((o) => o.id))));
		}
		default:
			return eq(auditEvent.entityId, ref.id);
	}
}

/** A refused query as the API's JSON error: the first problem, and the field it is in. */
export function queryRefusal(error: z.ZodError, known: string[]) {
	const issue = error.issues[0]!;
	return {
		message:
			issue.code === 'unrecognized_keys'
				? `Unknown filter ${issue.keys.join(', ')}: use ${known.join(', ')}.`
				: issue.message,
		field: issue.path.map(String).join('.') || null
	};
}

/** The query string as filters: an empty field of the filter form means no filter. */
export const auditParams = (params: URLSearchParams) =>
	Object.fromEntries([...params].filter(([, v]) => v.trim() !== ''));

/** An ISO date is the whole day: `from` at its start, `to` at its end (UTC). */
const startOf = (v: string) => new Date(v.length === 10 ? `${v}T00:00:00Z` : v);
const endOf = (v: string) =>
	v.length === 10 ? new Date(Date.parse(`${v}T00:00:00Z`) + 86_400_000 - 1) : new Date(v);

/** Escapes LIKE's wildcards so that a search for "50%" finds "50%". */
const literal = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

export type AuditRow = {
	seq: number;
	at: string;
	actorKind: string;
	actorId: string | null;
	actorName: string;
	actorRoles: string[];
	action: string;
	entityType: string;
	entityId: string | null;
	newValues: unknown;
	previousValues: unknown;
	reason: string | null;
	clientAddress: string | null;
	prevHash: string;
	hash: string;
};

/**
 * One page of the trail. A work order is named by its number or id and finds the events of the
 * work order and of its steps; equipment is named by its tag and finds its own events and those
 * of its work orders. Free text looks in the reason and in the new and previous values.
 */
export async function browseAudit(q: AuditQuery) {
	const where: (SQL | undefined)[] = [];
	if (q.from) where.push(gte(auditEvent.at, startOf(q.from)));
	if (q.to) where.push(lte(auditEvent.at, endOf(q.to)));
	if (q.person) where.push(eq(auditEvent.actorId, q.person));
	if (q.action)
		where.push(
			q.action.endsWith('.')
				? like(auditEvent.action, `${literal(q.action)}%`)
				: eq(auditEvent.action, q.action)
		);
	if (q.entityType) where.push(eq(auditEvent.entityType, q.entityType));
	const ids: string[][] = [];
	if (q.workOrder) {
		// An id names itself (the trail keeps events of any record, whatever tables say now).
		if (UUID.test(q.workOrder)) ids.push([q.workOrder.toLowerCase()]);
		else {
			const [wo] = await db()
				.select({ id: workOrders.id })
				.from(workOrders)
				.where(eq(workOrders.number, q.workOrder.toUpperCase()));
			ids.push(wo ? [wo.id] : []);
		}
	}
	if (q.equipment) {
		const [eq0] = await db()
			.select({ id: equipment.id })
			.from(equipment)
			.where(eq(equipment.tag, q.equipment.toUpperCase()));
		const orders = eq0
			? await db()
					.select({ id: workOrders.id })
					.from(workOrders)
					.where(eq(workOrders.equipmentId, eq0.id))
			: [];
		ids.push(eq0 ? [eq0.id, ...orders.map((o) => o.id)] : []);
	}
	for (const set of ids) {
		if (!set.length) return { events: [] as AuditRow[], next: null };
		// A step's events carry "<work order>:<step>" as their id.
		where.push(
			or(
				inArray(auditEvent.entityId, set),
				...set.map((id) => like(auditEvent.entityId, `${id}:%`))
			)
		);
	}
	if (q.record) where.push(await recordScope(q.record));
	if (q.q) {
		// The expression of the trigram index audit_event_text (migration 0017), searched as a whole.
		where.push(
			sql`(coalesce(${auditEvent.reason}, '') || ' ' || coalesce(${auditEvent.newValues}::text, '') || ' ' || coalesce(${auditEvent.previousValues}::text, '') || ' ' || ${auditEvent.actorName}) ilike ${`%${literal(q.q)}%`}`
		);
	}
	if (q.after)
		where.push(q.order === 'desc' ? lt(auditEvent.seq, q.after) : gt(auditEvent.seq, q.after));
	const rows = await db()
		.select({
			seq: auditEvent.seq,
			at: auditEvent.at,
			actorKind: auditEvent.actorKind,
			actorId: auditEvent.actorId,
			actorName: auditEvent.actorName,
			actorRoles: auditEvent.actorRoles,
			action: auditEvent.action,
			entityType: auditEvent.entityType,
			entityId: auditEvent.entityId,
			newValues: auditEvent.newValues,
			previousValues: auditEvent.previousValues,
			reason: auditEvent.reason,
			clientAddress: auditEvent.clientAddress,
			prevHash: auditEvent.prevHash,
			hash: auditEvent.hash
		})
		.from(auditEvent)
		.where(and(...where))
		.orderBy(q.order === 'desc' ? desc(auditEvent.seq) : asc(auditEvent.seq))
		.limit(q.limit + 1);
	const page = rows.slice(0, q.limit).map((r) => ({ ...r, at: r.at.toISOString() }));
	return {
		events: page as AuditRow[],
		next: rows.length > q.limit ? (page.at(-1)?.seq ?? null) : null
	};
}

/** The columns of a CSV export, in order: the hashed fields, then prev_hash and hash. */
export const csvColumns = [
	'seq',
	'at',
	'actor_kind',
	'actor_id',
	'actor_name',
	'actor_roles',
	'action',
	'entity_type',
	'entity_id',
	'reason',
	'new_values',
	'previous_values',
	'client_address',
	'prev_hash',
	'hash'
] as const;

/** One event as the fields of the JSON Lines export of 3/10 (the names the hash uses). */
export const exportFields = (r: AuditRow) => ({
	seq: r.seq,
	at: r.at,
	actor_kind: r.actorKind,
	actor_id: r.actorId,
	actor_name: r.actorName,
	actor_roles: r.actorRoles,
	action: r.action,
	entity_type: r.entityType,
	entity_id: r.entityId,
	new_values: r.newValues,
	previous_values: r.previousValues,
	reason: r.reason,
	client_address: r.clientAddress,
	prev_hash: r.prevHash,
	hash: r.hash
});

/**
 * A spreadsheet cell: values as JSON, roles joined by ";", and text that a spreadsheet would
 * run as a formula (=, +, -, @, tab, CR at its start) led by an apostrophe (OWASP's advice on
 * CSV injection). A seq or a hash never starts with those.
 */
export function csvCell(v: unknown): string {
	if (v === null || v === undefined) return '';
	if (Array.isArray(v) && v.every((x) => typeof x === 'string')) v = v.join(';');
	const text = typeof v === 'string' ? v : typeof v === 'number' ? String(v) : JSON.stringify(v);
	return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
}

/** Every event of a filtered view, oldest first, in pages of 200 (flat memory). */
export async function* filteredEvents(q: AuditQuery, upTo: number): AsyncGenerator<AuditRow[]> {
	let after: number | undefined = undefined;
	for (;;) {
		const page = await browseAudit({ ...q, order: 'asc', limit: 200, after });
		const rows = page.events.filter((e) => e.seq <= upTo);
		if (rows.length) yield rows;
		if (page.next === null || rows.length < page.events.length) return;
		after = page.next;
	}
}
