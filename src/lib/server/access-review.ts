import { and, asc, eq, inArray, sql } from 'drizzle-orm';
import { z } from 'zod';
import { statusOf, type AccountStatus } from '$lib/account-status';
import { isRole, type Role } from '$lib/roles';
import { db } from './db/index';
import { accounts, auditEvent } from './db/schema/index';

/**
 * The access review (8/10 item 6; REQUIREMENTS AC5, AC3): who holds which roles since when, the
 * last sign-in, deactivated accounts and the role changes of a period, for the periodic access
 * recertification. "Since" comes from the audit trail, not from a column: the trail is the
 * source of truth, read in seq order from each account's creation.
 */

/** An account without a sign-in for this many days is flagged for the reviewer. */
export const DORMANT_DAYS = 90;
/** The period when none is given: the last 90 days, today (UTC) included. */
export const DEFAULT_PERIOD_DAYS = 90;

const DAY = 86_400_000;
const isoDay = (ms: number) => new Date(ms).toISOString().slice(0, 10);
const dayStart = (d: string) => Date.parse(`${d}T00:00:00Z`);

const date = (name: string) =>
	z.iso.date({ error: `${name} is a date written 2026-12-01 (year, month, day; UTC).` });

const periodShape = { from: date('from').optional(), to: date('to').optional() };

export const reviewFormats = ['json', 'csv'] as const;
export const reviewTables = ['roles', 'changes'] as const;

/** The period of the page: from and to, both optional (see `withPeriod`). */
export const accessReviewPeriodSchema = z.strictObject(periodShape);

/** The API's query: the period, the format (json by default) and, for CSV, which table. */
export const accessReviewQuerySchema = z
	.strictObject({
		...periodShape,
		format: z.enum(reviewFormats, { error: 'format is json or csv.' }).optional().default('json'),
		table: z
			.enum(reviewTables, {
				error: 'table is roles (who holds which roles) or changes (role changes in the period).'
			})
			.optional()
	})
	.superRefine((q, ctx) => {
		if (q.format === 'csv' && !q.table)
			ctx.addIssue({
				code: 'custom',
				path: ['table'],
				message: 'A CSV holds one table: add table=roles or table=changes.'
			});
	});

export type Period = { from: string; to: string };

/**
 * The period with its defaults: `to` is today (UTC), `from` the 90 days up to `to`; or a
 * message when it starts after it ends.
 */
export function withPeriod(
	q: { from?: string; to?: string },
	now = new Date()
): { ok: true; period: Period } | { ok: false; message: string; field: string } {
	const to = q.to ?? isoDay(now.getTime());
	const from = q.from ?? isoDay(dayStart(to) - (DEFAULT_PERIOD_DAYS - 1) * DAY);
	if (from > to)
		return {
			ok: false,
			field: 'from',
			message: `The period starts after it ends: from (${from}) is later than to (${to}).`
		};
	return { ok: true, period: { from, to } };
}

/**
 * The query string as an object for the schemas: an empty field of the period form means no
 * value; a name given twice is refused (which one was meant?).
 */
export function reviewParams(
	params: URLSearchParams
): Refused | { ok: true; values: Record<string, string> } {
	const values: Record<string, string> = {};
	const seen = new Set<string>();
	for (const [key, value] of params) {
		if (seen.has(key))
			return { ok: false, field: key, message: `${key} is given more than once: give it once.` };
		seen.add(key);
		if (value.trim() !== '') values[key] = value.trim();
	}
	return { ok: true, values };
}

type Refused = { ok: false; message: string; field: string | null };

/** A refused query as `{ message, field }`: the first problem, and where it is. */
export function reviewRefusal(error: z.ZodError, known: readonly string[]) {
	const issue = error.issues[0]!;
	if (issue.code === 'unrecognized_keys')
		return {
			message: `Unknown parameter ${issue.keys.join(', ')}: use ${known.join(', ')}.`,
			field: issue.keys[0] ?? null
		};
	return { message: issue.message, field: issue.path.map(String).join('.') || null };
}

/** The page's address: the period with its defaults, or what is wrong with it. */
export function parsePeriodQuery(
	params: URLSearchParams,
	now = new Date()
): Refused | { ok: true; period: Period } {
	const raw = reviewParams(params);
	if (!raw.ok) return raw;
	const parsed = accessReviewPeriodSchema.safeParse(raw.values);
	if (!parsed.success) return { ok: false, ...reviewRefusal(parsed.error, ['from', 'to']) };
	return withPeriod(parsed.data, now);
}

export type ApiQuery = {
	ok: true;
	period: Period;
	format: (typeof reviewFormats)[number];
	table: (typeof reviewTables)[number] | null;
};

/** GET /api/v1/access-review's query: the period, the format and the table, or what is wrong. */
export function parseApiQuery(params: URLSearchParams, now = new Date()): Refused | ApiQuery {
	const raw = reviewParams(params);
	if (!raw.ok) return raw;
	const parsed = accessReviewQuerySchema.safeParse(raw.values);
	if (!parsed.success)
		return { ok: false, ...reviewRefusal(parsed.error, ['from', 'to', 'format', 'table']) };
	const period = withPeriod(parsed.data, now);
	if (!period.ok) return period;
	return {
		ok: true,
		period: period.period,
		format: parsed.data.format,
		table: parsed.data.table ?? null
	};
}

/** One role an account holds now, with the event that granted it. */
export type HeldRole = {
	role: Role;
	/** When the event that granted it was appended; null when the trail holds no grant (see `unexplained`). */
	since: string | null;
	sinceSeq: number | null;
	grantedBy: string | null;
	reason: string | null;
};

export type RecertificationFlag = 'never_signed_in' | 'dormant' | 'locked' | 'deactivated';

export const flagLabels: Record<RecertificationFlag, string> = {
	never_signed_in: 'Never signed in',
	dormant: `No sign-in for ${DORMANT_DAYS} days`,
	locked: 'Locked',
	deactivated: 'Deactivated'
};

export type ReviewAccount = {
	id: string;
	username: string;
	fullName: string;
	email: string;
	active: boolean;
	status: AccountStatus;
	deactivatedAt: string | null;
	/** Who deactivated it and why (the account.deactivate event). */
	deactivatedBy: string | null;
	deactivationReason: string | null;
	lockedAt: string | null;
	lastSignInAt: string | null;
	createdAt: string;
	roles: HeldRole[];
	flags: RecertificationFlag[];
	/** Roles the account row holds that no event in the trail granted (should never happen). */
	unexplained: boolean;
};

export type ChangeKind = 'created' | 'roles_changed' | 'deactivated' | 'locked' | 'unlocked';

export const changeLabels: Record<ChangeKind, string> = {
	created: 'Account created',
	roles_changed: 'Roles changed',
	deactivated: 'Deactivated',
	locked: 'Locked (failed passwords)',
	unlocked: 'Unlocked'
};

export type RoleChange = {
	seq: number;
	at: string;
	action: string;
	kind: ChangeKind;
	accountId: string;
	username: string | null;
	fullName: string | null;
	added: Role[];
	removed: Role[];
	by: string;
	reason: string | null;
};

export type AccessReview = {
	period: Period;
	/** The database clock when the report was read. */
	generatedAt: string;
	dormantDays: number;
	accounts: ReviewAccount[];
	changes: RoleChange[];
};

const kinds: Record<string, ChangeKind> = {
	'account.create': 'created',
	'account.roles_change': 'roles_changed',
	'account.deactivate': 'deactivated',
	'auth.lockout': 'locked',
	'auth.unlock': 'unlocked'
};

/** The roles named in an event's values (anything else in them is ignored). */
function rolesIn(values: unknown): Role[] {
	const list = (values as { roles?: unknown } | null)?.roles;
	return Array.isArray(list)
		? [...new Set(list.filter((r): r is Role => typeof r === 'string' && isRole(r)))]
		: [];
}

/**
 * The access review of a period. Everything is read in one read-only, repeatable-read
 * transaction, so the accounts and the trail agree with each other and with `generatedAt`.
 */
export async function accessReview(period: Period): Promise<AccessReview> {
	const periodStart = new Date(dayStart(period.from));
	const periodEnd = new Date(dayStart(period.to) + DAY); // exclusive: the end of `to`
	return db().transaction(
		async (tx) => {
			const [{ now }] = (await tx.execute(
				sql`select date_trunc('milliseconds', now()) as now`
			)) as unknown as [{ now: Date | string }];
			const rows = await tx
				.select({
					id: accounts.id,
					username: accounts.username,
					fullName: accounts.fullName,
					email: accounts.email,
					roles: accounts.roles,
					active: accounts.active,
					lockedAt: accounts.lockedAt,
					mustChangePassword: accounts.mustChangePassword,
					lastSignInAt: accounts.lastSignInAt,
					createdAt: accounts.createdAt,
					deactivatedAt: accounts.deactivatedAt
				})
				.from(accounts)
				.orderBy(asc(accounts.username));
			const events = await tx
				.select({
					seq: auditEvent.seq,
					at: auditEvent.at,
					action: auditEvent.action,
					entityId: auditEvent.entityId,
					actorName: auditEvent.actorName,
					newValues: auditEvent.newValues,
					previousValues: auditEvent.previousValues,
					reason: auditEvent.reason
				})
				.from(auditEvent)
				.where(
					and(eq(auditEvent.entityType, 'account'), inArray(auditEvent.action, Object.keys(kinds)))
				)
				.orderBy(asc(auditEvent.seq));
			return build(period, new Date(now), rows, events, periodStart, periodEnd);
		},
		{ isolationLevel: 'repeatable read', accessMode: 'read only' }
	);
}

type AccountRow = {
	id: string;
	username: string;
	fullName: string;
	email: string;
	roles: Role[];
	active: boolean;
	lockedAt: Date | null;
	mustChangePassword: boolean;
	lastSignInAt: Date | null;
	createdAt: Date;
	deactivatedAt: Date | null;
};
type EventRow = {
	seq: number;
	at: Date;
	action: string;
	entityId: string | null;
	actorName: string;
	newValues: unknown;
	previousValues: unknown;
	reason: string | null;
};

/** The report from the rows (pure, so the derivation is easy to follow). */
function build(
	period: Period,
	now: Date,
	rows: AccountRow[],
	events: EventRow[],
	periodStart: Date,
	periodEnd: Date
): AccessReview {
	type Grant = Omit<HeldRole, 'role'>;
	const held = new Map<string, Map<Role, Grant>>();
	const deactivations = new Map<string, EventRow>();
	const byId = new Map(rows.map((r) => [r.id, r]));
	const changes: RoleChange[] = [];

	for (const e of events) {
		const id = e.entityId?.toLowerCase();
		if (!id) continue;
		const kind = kinds[e.action]!;
		let added: Role[] = [];
		let removed: Role[] = [];
		if (kind === 'created' || kind === 'roles_changed') {
			const next = rolesIn(e.newValues);
			// What the event itself says it changed (a new account: every role it was given).
			const before = kind === 'created' ? [] : rolesIn(e.previousValues);
			added = next.filter((r) => !before.includes(r));
			removed = before.filter((r) => !next.includes(r));
			// A role kept through a change keeps the time it was first granted.
			const current = held.get(id) ?? new Map<Role, Grant>();
			const grant: Grant = {
				since: e.at.toISOString(),
				sinceSeq: e.seq,
				grantedBy: e.actorName,
				reason: e.reason ?? null
			};
			held.set(id, new Map(next.map((r) => [r, current.get(r) ?? grant])));
		}
		if (kind === 'deactivated') deactivations.set(id, e);
		if (e.at >= periodStart && e.at < periodEnd) {
			const account = byId.get(id);
			changes.push({
				seq: e.seq,
				at: e.at.toISOString(),
				action: e.action,
				kind,
				accountId: id,
				username: account?.username ?? null,
				fullName: account?.fullName ?? null,
				added: added.sort(),
				removed: removed.sort(),
				by: e.actorName,
				reason: e.reason
			});
		}
	}

	const dormantBefore = now.getTime() - DORMANT_DAYS * DAY;
	const iso = (d: Date | null) => d?.toISOString() ?? null;
	const reviewAccounts = rows.map((a): ReviewAccount => {
		const grants = held.get(a.id) ?? new Map<Role, Grant>();
		const roles = [...a.roles].sort().map((role): HeldRole => ({
			role,
			...(grants.get(role) ?? { since: null, sinceSeq: null, grantedBy: null, reason: null })
		}));
		const flags: RecertificationFlag[] = [];
		if (!a.lastSignInAt) flags.push('never_signed_in');
		else if (a.lastSignInAt.getTime() < dormantBefore) flags.push('dormant');
		if (a.lockedAt) flags.push('locked');
		if (!a.active) flags.push('deactivated');
		const deactivation = deactivations.get(a.id);
		return {
			id: a.id,
			username: a.username,
			fullName: a.fullName,
			email: a.email,
			active: a.active,
			status: statusOf(a),
			deactivatedAt: iso(a.deactivatedAt),
			deactivatedBy: deactivation?.actorName ?? null,
			deactivationReason: deactivation?.reason ?? null,
			lockedAt: iso(a.lockedAt),
			lastSignInAt: iso(a.lastSignInAt),
			createdAt: a.createdAt.toISOString(),
			roles,
			flags,
			unexplained:
				roles.some((r) => r.since === null) || [...grants.keys()].some((r) => !a.roles.includes(r))
		};
	});

	return {
		period,
		generatedAt: now.toISOString(),
		dormantDays: DORMANT_DAYS,
		accounts: reviewAccounts,
		changes
	};
}

/** The columns of the roles CSV: one row per account and role (an account without roles: one row). */
export const rolesCsvColumns = [
	'account_id',
	'username',
	'full_name',
	'email',
	'status',
	'role',
	'since',
	'granted_by',
	'grant_reason',
	'grant_seq',
	'last_sign_in_at',
	'created_at',
	'locked_at',
	'deactivated_at',
	'flags'
] as const;

export const changesCsvColumns = [
	'seq',
	'at',
	'action',
	'account_id',
	'username',
	'full_name',
	'added',
	'removed',
	'by',
	'reason'
] as const;

/** The rows of a table as plain values under the CSV's column names (cells are made by csvCell). */
export function csvRows(report: AccessReview, table: 'roles' | 'changes'): unknown[][] {
	if (table === 'changes')
		return report.changes.map((c) => [
			c.seq,
			c.at,
			c.action,
			c.accountId,
			c.username,
			c.fullName,
			c.added,
			c.removed,
			c.by,
			c.reason
		]);
	return report.accounts.flatMap((a) => {
		const common = (r: HeldRole | null) => [
			a.id,
			a.username,
			a.fullName,
			a.email,
			a.status,
			r?.role ?? null,
			r?.since ?? null,
			r?.grantedBy ?? null,
			r?.reason ?? null,
			r?.sinceSeq ?? null,
			a.lastSignInAt,
			a.createdAt,
			a.lockedAt,
			a.deactivatedAt,
			a.flags
		];
		return a.roles.length ? a.roles.map(common) : [common(null)];
	});
}
