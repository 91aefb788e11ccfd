import { and, asc, desc, eq, inArray, like, lte, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { env } from '$env/dynamic/private';
import { siteToday } from '$lib/fitness';
import { dueStatus, projectUsageDay, type Due, type ScheduleRule } from '$lib/calc/schedule';
import { pmScheduleSchema, type PmScheduleInput } from '$lib/schemas/pm';
import { db } from './db/index';
import {
	equipment,
	equipmentUsage,
	equipmentVersions,
	pmDigests,
	pmSchedules,
	pmScheduleVersions,
	procedures,
	workOrders,
	workOrderTransitions
} from './db/schema/index';
import { createDueFollowUps } from './follow-ups';
import { log } from './log';
import { notifyPmDigest, type DigestItem } from './notify';
import { appendRecordEvent, mustHold, RecordError, siteOrFail, type Recorder } from './records';
import { createWorkOrder } from './work-orders';

/**
 * Preventive maintenance schedules (9/10 item 1): the Planner's schedules, where each stands for
 * each piece of equipment it covers, and the scheduler that makes the work orders when they fall
 * within their lead time — as "system: PM scheduler", once per due date however many runs there
 * are (the unique index work_orders_pm_once decides; migration 0018).
 */
export const PM_SCHEDULER: Recorder = { kind: 'system', name: 'PM scheduler' };

type VersionRow = typeof pmScheduleVersions.$inferSelect;

function parseSchedule(input: PmScheduleInput) {
	const parsed = pmScheduleSchema.safeParse(input);
	if (!parsed.success) {
		const issue = parsed.error.issues[0]!;
		throw new RecordError(issue.message, issue.path.map(String).join('.') || undefined);
	}
	return parsed.data;
}

async function checkReferences(v: ReturnType<typeof parseSchedule>, siteId: string) {
	const [p] = await db()
		.select({ id: procedures.id, siteId: procedures.siteId })
		.from(procedures)
		.where(eq(procedures.id, v.procedureId));
	if (!p || p.siteId !== siteId)
		throw new RecordError('Choose a procedure of this site.', 'procedureId');
	if (v.equipmentId) {
		const [e] = await db()
			.select({ siteId: equipment.siteId })
			.from(equipment)
			.where(eq(equipment.id, v.equipmentId));
		if (!e || e.siteId !== siteId)
			throw new RecordError('Choose equipment of this site.', 'equipmentId');
	}
}

const versionValues = (v: ReturnType<typeof parseSchedule>) => ({
	title: v.title,
	equipmentId: v.equipmentId,
	areaId: v.areaId,
	equipmentClass: v.equipmentClass,
	procedureId: v.procedureId,
	intervalEvery: v.intervalEvery,
	intervalUnit: v.intervalUnit,
	usageKind: v.usageKind,
	usageLimit: v.usageLimit,
	leadDays: v.leadDays,
	graceDays: v.graceDays,
	leadUsage: v.leadUsage,
	graceUsage: v.graceUsage,
	startsOn: v.startsOn
});

/** A new schedule (Planner): its identity and version 1, with one audit event. */
export async function createSchedule(
	by: Recorder,
	input: PmScheduleInput,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'plan preventive maintenance');
	const site = await siteOrFail();
	const v = parseSchedule(input);
	await checkReferences(v, site.id);
	const id = randomUUID();
	return db().transaction(async (tx) => {
		const values = versionValues(v);
		const rec = await appendRecordEvent(tx, by, {
			action: 'pm_schedule.create',
			entityType: 'pm_schedule',
			entityId: id,
			newValues: { ...values, active: true },
			clientAddress
		});
		await tx.insert(pmSchedules).values({ id, siteId: site.id, ...rec });
		await tx.insert(pmScheduleVersions).values({
			id: randomUUID(),
			scheduleId: id,
			version: 1,
			active: true,
			reason: null,
			...values,
			...rec
		});
		return { id };
	});
}

/** A change of a schedule (Planner): a new version with its reason; `active: false` pauses it. */
export async function changeSchedule(
	by: Recorder,
	id: string,
	input: PmScheduleInput & { active: boolean },
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'plan preventive maintenance', { type: 'pm_schedule', id });
	const site = await siteOrFail();
	const v = parseSchedule(input);
	await checkReferences(v, site.id);
	if (!reason.trim()) throw new RecordError('Give the reason for the change.', 'reason');
	return db().transaction(async (tx) => {
		// The schedule's lock: two changes at once get consecutive version numbers.
		await tx.execute(
			sql`select pg_advisory_xact_lock(hashtextextended(${'pm_schedule:' + id}, 0))`
		);
		const [schedule] = await tx
			.select({ id: pmSchedules.id })
			.from(pmSchedules)
			.where(eq(pmSchedules.id, id));
		if (!schedule) throw new RecordError('There is no such schedule.', undefined, 404);
		const [last] = await tx
			.select()
			.from(pmScheduleVersions)
			.where(eq(pmScheduleVersions.scheduleId, id))
			.orderBy(desc(pmScheduleVersions.version))
			.limit(1);
		const values = { ...versionValues(v), active: input.active };
		const previous = Object.fromEntries(
			Object.keys(values).map((k) => [k, last![k as keyof VersionRow]])
		);
		if (Object.entries(values).every(([k, x]) => previous[k] === x))
			throw new RecordError(
				'Nothing is changed: change the schedule, or pause or resume it.',
				undefined,
				422
			);
		const rec = await appendRecordEvent(tx, by, {
			action: 'pm_schedule.change',
			entityType: 'pm_schedule',
			entityId: id,
			newValues: { version: last!.version + 1, ...values },
			previousValues: { version: last!.version, ...previous },
			reason,
			clientAddress
		});
		await tx.insert(pmScheduleVersions).values({
			id: randomUUID(),
			scheduleId: id,
			version: last!.version + 1,
			reason,
			...values,
			...rec
		});
		return { version: last!.version + 1 };
	});
}

/** One schedule: every version, newest first, and where the current one stands for its equipment. */
export async function getSchedule(id: string, now = new Date()) {
	const site = await siteOrFail();
	const versions = await db()
		.select()
		.from(pmScheduleVersions)
		.innerJoin(pmSchedules, eq(pmSchedules.id, pmScheduleVersions.scheduleId))
		.where(and(eq(pmScheduleVersions.scheduleId, id), eq(pmSchedules.siteId, site.id)))
		.orderBy(desc(pmScheduleVersions.version));
	if (!versions.length) return undefined;
	const current: CurrentVersion = {
		...versions[0]!.pm_schedule_versions,
		createdSeq: versions[0]!.pm_schedules.auditSeq
	};
	const today = siteToday(site.timeZone, now);
	const targets = [];
	for (const t of await targetsOf(current, site.id))
		targets.push(await statusFor(current, t, today, site.timeZone));
	const [procedure] = await db()
		.select({ code: procedures.code })
		.from(procedures)
		.where(eq(procedures.id, current.procedureId));
	return {
		id,
		current,
		rule: ruleOf(current),
		procedureCode: procedure?.code ?? '',
		versions: versions.map((r) => r.pm_schedule_versions),
		targets,
		today
	};
}

/** Each schedule's current version. */
async function currentVersions(siteId: string) {
	const rows = await db()
		.select({ v: pmScheduleVersions, createdSeq: pmSchedules.auditSeq })
		.from(pmScheduleVersions)
		.innerJoin(pmSchedules, eq(pmSchedules.id, pmScheduleVersions.scheduleId))
		.where(eq(pmSchedules.siteId, siteId))
		.orderBy(asc(pmScheduleVersions.scheduleId), desc(pmScheduleVersions.version));
	const latest = new Map<string, CurrentVersion>();
	for (const { v, createdSeq } of rows)
		if (!latest.has(v.scheduleId)) latest.set(v.scheduleId, { ...v, createdSeq });
	return [...latest.values()];
}
/** A schedule's current version, with the seq of the schedule's creation (its first basis). */
type CurrentVersion = VersionRow & { createdSeq: number };

export const ruleOf = (v: VersionRow): ScheduleRule => ({
	calendar:
		v.intervalEvery !== null && v.intervalUnit !== null
			? { every: v.intervalEvery, unit: v.intervalUnit as 'day' | 'week' | 'month' | 'year' }
			: null,
	usage:
		v.usageKind !== null && v.usageLimit !== null
			? { kind: v.usageKind as 'sip_cycles' | 'operating_hours', limit: v.usageLimit }
			: null,
	leadDays: v.leadDays,
	graceDays: v.graceDays,
	leadUsage: v.leadUsage,
	graceUsage: v.graceUsage
});

/** The equipment a version covers: its one piece, or every piece whose current version is of the class in the area. */
async function targetsOf(v: VersionRow, siteId: string) {
	if (v.equipmentId) {
		const [e] = await db()
			.select({ id: equipment.id, tag: equipment.tag })
			.from(equipment)
			.where(eq(equipment.id, v.equipmentId));
		return e ? [e] : [];
	}
	const rows = await db()
		.select({
			id: equipment.id,
			tag: equipment.tag,
			version: equipmentVersions.version,
			areaId: equipmentVersions.areaId,
			equipmentClass: equipmentVersions.equipmentClass
		})
		.from(equipmentVersions)
		.innerJoin(equipment, eq(equipment.id, equipmentVersions.equipmentId))
		.where(eq(equipment.siteId, siteId))
		.orderBy(asc(equipment.tag), desc(equipmentVersions.version));
	const seen = new Set<string>();
	const out: { id: string; tag: string }[] = [];
	for (const r of rows) {
		if (seen.has(r.id)) continue;
		seen.add(r.id);
		if (r.areaId === v.areaId && r.equipmentClass === v.equipmentClass)
			out.push({ id: r.id, tag: r.tag });
	}
	return out;
}

const usageUpTo = async (equipmentId: string, kind: string, seq?: number) => {
	const [row] = await db()
		.select({ total: sql<number>`coalesce(sum(${equipmentUsage.amount}), 0)::float8` })
		.from(equipmentUsage)
		.where(
			and(
				eq(equipmentUsage.equipmentId, equipmentId),
				eq(equipmentUsage.kind, kind),
				seq === undefined ? undefined : lte(equipmentUsage.auditSeq, seq)
			)
		);
	return Number(row?.total ?? 0);
};

export type TargetStatus = {
	equipmentId: string;
	tag: string;
	/** The released work order the due date counts from, or null for the schedule's start. */
	basisWorkOrder: string | null;
	basisDay: string;
	basisUsage: number;
	usageNow: number;
	due: Due;
	/** The basis key of the work order to make now (see work_orders.pm_basis). */
	key: string;
	/** The open or released work order made for this due date, if any. */
	made: { id: string; number: string } | null;
	/** Usage per day over the last 90 days (for the projection), or 0. */
	perDay: number;
	/** When the usage limit is expected to be reached at that rate, or null. */
	projectedOn: string | null;
	/** The next date the work falls due: the earlier of the calendar's and the projection's. */
	nextOn: string | null;
};

/** How much usage the last `days` days added (by when it happened). */
async function recentUsage(equipmentId: string, kind: string, days: number) {
	const [row] = await db()
		.select({ total: sql<number>`coalesce(sum(${equipmentUsage.amount}), 0)::float8` })
		.from(equipmentUsage)
		.where(
			and(
				eq(equipmentUsage.equipmentId, equipmentId),
				eq(equipmentUsage.kind, kind),
				sql`${equipmentUsage.occurredAt} > now() - make_interval(days => ${days})`
			)
		);
	return Number(row?.total ?? 0);
}

/** Where a schedule stands for one piece of equipment on the site's `today`. */
async function statusFor(
	v: CurrentVersion,
	target: { id: string; tag: string },
	today: string,
	timeZone: string
): Promise<TargetStatus> {
	const rule = ruleOf(v);
	const usageKind = rule.usage?.kind ?? 'sip_cycles';
	const [released] = await db()
		.select({
			id: workOrders.id,
			at: workOrderTransitions.recordedAt,
			seq: workOrderTransitions.auditSeq
		})
		.from(workOrderTransitions)
		.innerJoin(workOrders, eq(workOrders.id, workOrderTransitions.workOrderId))
		.where(
			and(
				eq(workOrders.pmScheduleId, v.scheduleId),
				eq(workOrders.equipmentId, target.id),
				eq(workOrderTransitions.kind, 'released')
			)
		)
		.orderBy(desc(workOrderTransitions.auditSeq))
		.limit(1);
	const basisId = released?.id ?? 'start';
	const basisDay = released ? siteToday(timeZone, released.at) : v.startsOn;
	const basisUsage = await usageUpTo(target.id, usageKind, released?.seq ?? v.createdSeq);
	const usageNow = await usageUpTo(target.id, usageKind);
	// Work orders already made on this basis; a cancelled one lets the next be made.
	const made = await db()
		.select({ id: workOrders.id, number: workOrders.number, basis: workOrders.pmBasis })
		.from(workOrders)
		.where(
			and(
				eq(workOrders.pmScheduleId, v.scheduleId),
				eq(workOrders.equipmentId, target.id),
				like(workOrders.pmBasis, `${basisId}#%`)
			)
		);
	const cancelled = made.length
		? (
				await db()
					.select({ id: workOrderTransitions.workOrderId })
					.from(workOrderTransitions)
					.where(
						and(
							eq(workOrderTransitions.kind, 'cancelled'),
							inArray(
								workOrderTransitions.workOrderId,
								made.map((m) => m.id)
							)
						)
					)
			).length
		: 0;
	const key = `${basisId}#${cancelled}`;
	const open = made.find((m) => m.basis === key) ?? null;
	const due = dueStatus(
		rule,
		{ day: basisDay, usage: basisUsage },
		today,
		Math.max(usageNow, basisUsage)
	);
	if (!due.ok)
		throw new RecordError(
			`Schedule “${v.title}” for ${target.tag}: ${due.message}`,
			undefined,
			409
		);
	const perDay = rule.usage ? (await recentUsage(target.id, usageKind, 90)) / 90 : 0;
	const projectedOn =
		due.value.dueAtUsage === null
			? null
			: projectUsageDay(today, usageNow, due.value.dueAtUsage, perDay);
	const nextOn =
		[due.value.dueOn, projectedOn].filter((d): d is string => d !== null).sort()[0] ?? null;
	return {
		perDay,
		projectedOn,
		nextOn,
		equipmentId: target.id,
		tag: target.tag,
		basisWorkOrder: released?.id ?? null,
		basisDay,
		basisUsage,
		usageNow,
		due: due.value,
		key,
		made: open ? { id: open.id, number: open.number } : null
	};
}

/** Every schedule with its current version and where it stands for each piece of equipment it covers. */
export async function listSchedules(now = new Date()) {
	const site = await siteOrFail();
	const today = siteToday(site.timeZone, now);
	const versions = await currentVersions(site.id);
	const names = versions.length
		? await db()
				.select({ id: procedures.id, code: procedures.code })
				.from(procedures)
				.where(
					inArray(
						procedures.id,
						versions.map((v) => v.procedureId)
					)
				)
		: [];
	const out = [];
	for (const v of versions) {
		const targets = await targetsOf(v, site.id);
		const status = [];
		for (const t of targets) status.push(await statusFor(v, t, today, site.timeZone));
		out.push({
			id: v.scheduleId,
			version: v,
			procedureCode: names.find((n) => n.id === v.procedureId)?.code ?? '',
			rule: ruleOf(v),
			targets: status
		});
	}
	return { today, timeZone: site.timeZone, schedules: out };
}

const usageWords = { sip_cycles: 'SIP cycles', operating_hours: 'operating hours' } as const;

/** "every 12 months or 100 SIP cycles, whichever first" */
export function ruleWords(rule: ScheduleRule) {
	const parts: string[] = [];
	if (rule.calendar)
		parts.push(
			`every ${rule.calendar.every} ${rule.calendar.unit}${rule.calendar.every === 1 ? '' : 's'}`
		);
	if (rule.usage)
		parts.push(
			`${rule.calendar ? '' : 'every '}${rule.usage.limit} ${usageWords[rule.usage.kind]}`
		);
	return parts.join(' or ') + (parts.length > 1 ? ', whichever first' : '');
}

const isUniqueViolation = (e: unknown) => {
	const cause = (e as { cause?: unknown })?.cause ?? e;
	const c = cause as { code?: string; constraint_name?: string };
	return c?.code === '23505' && c.constraint_name === 'work_orders_pm_once';
};

/**
 * The scheduler (9/10): makes the work order of every active schedule and piece of equipment
 * whose due date (or usage) has come within its lead time, unless it is made already. Safe to
 * run any number of times, on any number of servers at once: the database takes one work order
 * per (schedule, equipment, basis) and refuses the rest, which are counted as already made.
 */
export async function generateDueWork(now = new Date()) {
	const { today, schedules } = await listSchedules(now);
	const made: { number: string; tag: string; schedule: string }[] = [];
	let already = 0;
	for (const s of schedules) {
		if (!s.version.active) continue;
		for (const t of s.targets) {
			if (!t.due.generateNow) continue;
			if (t.made) {
				already++;
				continue;
			}
			const dueOn = t.due.decidedBy === 'calendar' && t.due.dueOn ? t.due.dueOn : today;
			try {
				const wo = await createWorkOrder(PM_SCHEDULER, {
					kind: 'preventive',
					equipmentId: t.equipmentId,
					procedureId: s.version.procedureId,
					dueOn,
					priority: t.due.state === 'overdue' ? 'high' : 'routine',
					assignees: [],
					notes: `Made by the PM scheduler: ${s.version.title} (${ruleWords(s.rule)}).`,
					pm: { scheduleId: s.id, basis: t.key }
				});
				made.push({ number: wo.number, tag: t.tag, schedule: s.version.title });
			} catch (e) {
				if (isUniqueViolation(e)) already++;
				else throw e;
			}
		}
	}
	// Follow-ups a crash left out between a SIP cycle and its follow-up (9/10 item 3).
	const followUps = await createDueFollowUps();
	return { today, made, already, followUps };
}

/** The site-local hour from which the day's digest goes out (PM_DIGEST_HOUR, 6 by default). */
export const digestHour = () => {
	const v = Number(env.PM_DIGEST_HOUR ?? 6);
	return Number.isInteger(v) && v >= 0 && v <= 23 ? v : 6;
};

const localHour = (timeZone: string, now: Date) =>
	Number(
		new Intl.DateTimeFormat('en-GB', { timeZone, hour: 'numeric', hourCycle: 'h23' }).format(now)
	);

const stateWords: Record<Due['state'], string> = {
	not_due: 'not due',
	due_soon: 'due soon',
	due: 'due',
	overdue: 'overdue'
};

/**
 * The Planners' digest (9/10 item 4): once a site-local day, from `digestHour()`, when work is
 * due soon or overdue, one e-mail per Planner listing all of it. The row of pm_digests, written
 * with the mails in one transaction, makes it once a day however many schedulers run.
 */
export async function sendPmDigest(now = new Date()) {
	const site = await siteOrFail();
	const day = siteToday(site.timeZone, now);
	if (localHour(site.timeZone, now) < digestHour()) return { day, sent: false as const };
	const [done] = await db()
		.select({ id: pmDigests.id })
		.from(pmDigests)
		.where(and(eq(pmDigests.siteId, site.id), eq(pmDigests.day, day)));
	if (done) return { day, sent: false as const };
	const { schedules } = await listSchedules(now);
	const overdue: DigestItem[] = [];
	const dueSoon: DigestItem[] = [];
	for (const s of schedules) {
		if (!s.version.active) continue;
		for (const t of s.targets) {
			if (t.due.state === 'not_due') continue;
			const item = {
				title: `${t.tag}: ${s.version.title}`,
				detail:
					`${stateWords[t.due.state]}${t.nextOn ? `, due ${t.nextOn}` : ''}` +
					(t.made ? `; work order ${t.made.number} is made` : '; no work order yet')
			};
			(t.due.state === 'overdue' ? overdue : dueSoon).push(item);
		}
	}
	if (!overdue.length && !dueSoon.length) return { day, sent: false as const };
	try {
		return await db().transaction(async (tx) => {
			const id = randomUUID();
			const rec = await appendRecordEvent(tx, PM_SCHEDULER, {
				action: 'pm.digest',
				entityType: 'site',
				entityId: site.id,
				newValues: { day, overdue: overdue.length, dueSoon: dueSoon.length }
			});
			const recipients = await notifyPmDigest(tx, day, overdue, dueSoon, rec.auditSeq);
			await tx.insert(pmDigests).values({
				id,
				siteId: site.id,
				day,
				overdue: overdue.length,
				dueSoon: dueSoon.length,
				recipients,
				...rec
			});
			return { day, sent: true as const, overdue, dueSoon, recipients };
		});
	} catch (e) {
		const cause = ((e as { cause?: unknown })?.cause ?? e) as { constraint_name?: string };
		if (cause?.constraint_name === 'pm_digests_once') return { day, sent: false as const };
		throw e;
	}
}

let timer: ReturnType<typeof setInterval> | null = null;
let firstRun: ReturnType<typeof setTimeout> | null = null;
let running: Promise<unknown> | null = null;

/** The scheduler inside the server: a run soon after start, then every `intervalMs`. */
export function startPmScheduler(intervalMs: number, firstAfterMs = 10_000) {
	const run = () => {
		if (running) return; // one run at a time in this process (other servers: the database)
		running = generateDueWork()
			.then(async (r) => {
				if (r.made.length) log.info('PM scheduler made work orders', { made: r.made });
				if (r.followUps.length)
					log.info('PM scheduler made follow-ups', { made: r.followUps.map((f) => f.number) });
				const digest = await sendPmDigest();
				if (digest.sent) log.info('PM digest queued', { day: digest.day });
			})
			.catch((e: Error) => log.error('PM scheduler run failed', { message: e.message }))
			.finally(() => (running = null));
	};
	firstRun = setTimeout(run, firstAfterMs);
	firstRun.unref?.();
	timer = setInterval(run, intervalMs);
	timer.unref?.();
}

export function stopPmScheduler() {
	if (firstRun) clearTimeout(firstRun);
	if (timer) clearInterval(timer);
	firstRun = timer = null;
}

/** For `npm run pm:generate` (scripts/pm-generate.js): the pool of this module copy. */
export { closeDatabase } from './db/index';
