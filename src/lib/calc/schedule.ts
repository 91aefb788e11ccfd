import { addDays } from '../fitness';
import { fromLocalInput } from '../time';
import { ok, refuse, type Calc } from './result';

/**
 * Preventive maintenance due dates (9/10 item 1; DESIGN "Calculations"): a calendar interval
 * and/or a usage limit (steam-in-place cycles or operating hours), whichever comes first, with a
 * lead time (when the work order is made) and a grace window (how long after the due date the
 * work is still on time). Calendar arithmetic is on the site's local dates — a PM falls due on a
 * day at the site, whatever the offset from UTC that day — so daylight-saving changes never move
 * a due date; the instant a local day starts comes from the IANA tz data the runtime carries.
 */
export type IntervalUnit = 'day' | 'week' | 'month' | 'year';
export type Interval = { every: number; unit: IntervalUnit };
export type UsageKind = 'sip_cycles' | 'operating_hours';

export type ScheduleRule = {
	/** Every N days, weeks, months or years after the basis; null: by usage only. */
	calendar: Interval | null;
	/** Due after this much usage since the basis; null: by calendar only. */
	usage: { kind: UsageKind; limit: number } | null;
	/** Days before the calendar due date that the work order is made (and shows as due soon). */
	leadDays: number;
	/** Days after the due date that the work is still within its window. */
	graceDays: number;
	/** Usage before the usage limit at which the work order is made (same unit as the limit). */
	leadUsage: number;
	/** Usage past the limit still within the window. */
	graceUsage: number;
};

/** What the next due date counts from: the last released work order of the schedule, or its start. */
export type Basis = { day: string; usage: number };

export type DueState = 'not_due' | 'due_soon' | 'due' | 'overdue';

export type Due = {
	/** The calendar due date (site-local), or null without a calendar interval. */
	dueOn: string | null;
	/** The usage counter reading at which it falls due, or null without a usage limit. */
	dueAtUsage: number | null;
	/** Which limit decides now: the one reached (or nearer to being reached) first. */
	decidedBy: 'calendar' | 'usage';
	state: DueState;
	/** The first day the work order is made (lead time); null when only usage decides. */
	generateFrom: string | null;
	/** The last day within the grace window; null without a calendar interval. */
	graceEndsOn: string | null;
	/** Whether the work order should exist now (lead time reached on either limit). */
	generateNow: boolean;
};

const DAY_RE = /^(\d{4})-(\d{2})-(\d{2})$/;

/** Whether text is a real calendar date YYYY-MM-DD (2027-02-29 is not). */
export function isDay(text: string): boolean {
	const m = DAY_RE.exec(text);
	if (!m) return false;
	const d = new Date(`${text}T00:00:00Z`);
	return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === text;
}

const daysInMonth = (year: number, month0: number) =>
	new Date(Date.UTC(year, month0 + 1, 0)).getUTCDate();

/**
 * The local date one interval after `day`. Months and years keep the day of the month, or the
 * month's last day when it has fewer (31 January + 1 month = 28 or 29 February; 29 February +
 * 1 year = 28 February), and count from the basis each time (so a monthly PM from 31 January
 * is due 28 February, then 31 March — never drifting to the 28th).
 */
export function addInterval(day: string, interval: Interval, times = 1): Calc<string> {
	if (!isDay(day)) return refuse('The date is not a calendar date (YYYY-MM-DD).');
	if (!Number.isSafeInteger(interval.every) || interval.every < 1)
		return refuse('The interval is a whole number from 1.');
	if (!Number.isSafeInteger(times) || times < 0) return refuse('The count is a whole number.');
	const n = interval.every * times;
	if (interval.unit === 'day' || interval.unit === 'week')
		return ok(addDays(day, interval.unit === 'week' ? n * 7 : n));
	const [y, m, d] = day.split('-').map(Number) as [number, number, number];
	const months = interval.unit === 'year' ? n * 12 : n;
	const total = y * 12 + (m - 1) + months;
	const year = Math.floor(total / 12);
	const month0 = total % 12;
	if (year > 9999) return refuse('The due date would fall after the year 9999.');
	const date = Math.min(d, daysInMonth(year, month0));
	return ok(
		`${String(year).padStart(4, '0')}-${String(month0 + 1).padStart(2, '0')}-${String(date).padStart(2, '0')}`
	);
}

/** Whole days from `a` to `b` (local dates): positive when b is later. */
export function daysBetween(a: string, b: string): number {
	return Math.round((Date.parse(`${b}T00:00:00Z`) - Date.parse(`${a}T00:00:00Z`)) / 86_400_000);
}

/** The instant a local date starts at the site (00:00 there), from the runtime's IANA tz data. */
export function startOfLocalDay(day: string, timeZone: string): Date | null {
	return isDay(day) ? fromLocalInput(`${day}T00:00`, timeZone) : null;
}

/** The rule checked: the same checks the Planner's form makes, for callers that are not forms. */
export function checkRule(rule: ScheduleRule): Calc<ScheduleRule> {
	if (!rule.calendar && !rule.usage)
		return refuse('Give a calendar interval, a usage limit, or both.');
	if (rule.calendar && !(Number.isSafeInteger(rule.calendar.every) && rule.calendar.every >= 1))
		return refuse('The calendar interval is a whole number from 1.');
	if (rule.usage && !(Number.isFinite(rule.usage.limit) && rule.usage.limit > 0))
		return refuse('The usage limit is a number above zero.');
	for (const [value, what] of [
		[rule.leadDays, 'The lead time'],
		[rule.graceDays, 'The grace window'],
		[rule.leadUsage, 'The usage lead'],
		[rule.graceUsage, 'The usage grace']
	] as const)
		if (!(Number.isFinite(value) && value >= 0)) return refuse(`${what} is a number from 0.`);
	if (rule.usage && rule.leadUsage >= rule.usage.limit)
		return refuse('The usage lead must be less than the usage limit.');
	return ok(rule);
}

/**
 * Where a schedule stands on `today` (site-local) with the equipment's usage counter at `usage`.
 * Whichever first: the state is the more urgent of the calendar's and the usage's.
 */
export function dueStatus(
	rule: ScheduleRule,
	basis: Basis,
	today: string,
	usage: number
): Calc<Due> {
	const checked = checkRule(rule);
	if (!checked.ok) return checked;
	if (!isDay(basis.day) || !isDay(today))
		return refuse('The dates are calendar dates (YYYY-MM-DD).');
	if (!Number.isFinite(usage) || !Number.isFinite(basis.usage))
		return refuse('The usage counter is a number.');
	if (usage < basis.usage)
		return refuse('The usage counter reads less than at the last work: check the readings.');
	const rank: Record<DueState, number> = { not_due: 0, due_soon: 1, due: 2, overdue: 3 };

	let calendar: {
		state: DueState;
		dueOn: string;
		generateFrom: string;
		graceEndsOn: string;
	} | null = null;
	if (rule.calendar) {
		const dueOn = addInterval(basis.day, rule.calendar);
		if (!dueOn.ok) return dueOn;
		const generateFrom = addDays(dueOn.value, -rule.leadDays);
		const graceEndsOn = addDays(dueOn.value, rule.graceDays);
		const state: DueState =
			today > graceEndsOn
				? 'overdue'
				: today >= dueOn.value
					? 'due'
					: today >= generateFrom
						? 'due_soon'
						: 'not_due';
		calendar = { state, dueOn: dueOn.value, generateFrom, graceEndsOn };
	}
	let byUsage: { state: DueState; dueAt: number } | null = null;
	if (rule.usage) {
		const dueAt = basis.usage + rule.usage.limit;
		const state: DueState =
			usage > dueAt + rule.graceUsage
				? 'overdue'
				: usage >= dueAt
					? 'due'
					: usage >= dueAt - rule.leadUsage
						? 'due_soon'
						: 'not_due';
		byUsage = { state, dueAt };
	}
	// The limit that decides: the more urgent one; on a tie the calendar when it exists, unless
	// the usage has used up more of its allowance than the calendar has of its days.
	let decidedBy: 'calendar' | 'usage' = calendar ? 'calendar' : 'usage';
	if (calendar && byUsage) {
		const c = rank[calendar.state];
		const u = rank[byUsage.state];
		if (u > c) decidedBy = 'usage';
		else if (u === c) {
			const usedDays =
				daysBetween(basis.day, today) / Math.max(1, daysBetween(basis.day, calendar.dueOn));
			const usedUsage = (usage - basis.usage) / rule.usage!.limit;
			if (usedUsage > usedDays) decidedBy = 'usage';
		}
	}
	const state = decidedBy === 'calendar' ? calendar!.state : byUsage!.state;
	return ok({
		dueOn: calendar?.dueOn ?? null,
		dueAtUsage: byUsage?.dueAt ?? null,
		decidedBy,
		state,
		generateFrom: calendar?.generateFrom ?? null,
		graceEndsOn: calendar?.graceEndsOn ?? null,
		generateNow: state !== 'not_due'
	});
}

/** 1 for Monday … 7 for Sunday (ISO 8601) of a local date. */
export function isoWeekday(day: string): number {
	const d = new Date(`${day}T00:00:00Z`).getUTCDay();
	return d === 0 ? 7 : d;
}

/** The Monday of the ISO week a local date is in. */
export const mondayOf = (day: string) => addDays(day, 1 - isoWeekday(day));

/**
 * The ISO 8601 week of a local date: the week with the year's first Thursday is week 1, so the
 * days around New Year may belong to the other year's week (2027-01-01 is in 2026-W53).
 */
export function isoWeek(day: string): { year: number; week: number } {
	const thursday = addDays(day, 4 - isoWeekday(day));
	const year = Number(thursday.slice(0, 4));
	const week = Math.floor(daysBetween(`${year}-01-01`, thursday) / 7) + 1;
	return { year, week };
}

/**
 * The local date on which a usage limit is expected to be reached at the recent rate of use
 * (per day), or null when there is no use to project from. Rounded down: never later than the
 * rate says.
 */
export function projectUsageDay(
	today: string,
	usageNow: number,
	dueAt: number,
	perDay: number
): string | null {
	if (!(Number.isFinite(perDay) && perDay > 0) || !Number.isFinite(usageNow)) return null;
	if (usageNow >= dueAt) return today;
	const days = Math.floor((dueAt - usageNow) / perDay);
	return days > 36_500 ? null : addDays(today, days);
}
