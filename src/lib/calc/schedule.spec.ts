import { describe, expect, it } from 'vitest';
import { offsetInZone } from '../time';
import {
	addInterval,
	daysBetween,
	dueStatus,
	isDay,
	isoWeek,
	mondayOf,
	projectUsageDay,
	startOfLocalDay,
	type ScheduleRule
} from './schedule';

// PM due dates (issue 9/10 item 1; REQUIREMENTS CS-PM2). Sources named beside each check:
// - the Gregorian calendar's leap-year rule (a year divisible by 4, except centuries not
//   divisible by 400), written out independently below as the reference;
// - EU summer time, Directive 2000/84/EC art. 2–3: it begins at 01:00 UTC on the last Sunday of
//   March and ends at 01:00 UTC on the last Sunday of October (Europe/Berlin: +01:00 → +02:00);
// - US daylight saving time, 15 U.S.C. §260a as amended by the Energy Policy Act of 2005:
//   second Sunday of March to first Sunday of November, at 02:00 local time;
// and the IANA tz data that Node's Intl carries, which must agree with both.
const leap = (y: number) => (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
const monthLength = (y: number, m: number) =>
	[31, leap(y) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][m - 1]!;
const value = <T>(r: { ok: true; value: T } | { ok: false; message: string }) => {
	if (!r.ok) throw new Error(r.message);
	return r.value;
};

describe('calendar intervals on local dates', () => {
	it('month ends: 31 January + 1 month is the last day of February, 28 or 29 by the leap-year rule', () => {
		for (const year of [2026, 2027, 2028, 2100, 2000, 2400]) {
			const due = value(addInterval(`${year}-01-31`, { every: 1, unit: 'month' }));
			expect(due).toBe(`${year}-02-${monthLength(year, 2)}`);
		}
		expect(value(addInterval('2026-08-31', { every: 1, unit: 'month' }))).toBe('2026-09-30');
		expect(value(addInterval('2026-12-15', { every: 1, unit: 'month' }))).toBe('2027-01-15');
	});

	it('counting from the basis each time never drifts to the 28th', () => {
		const monthly = { every: 1, unit: 'month' } as const;
		expect(value(addInterval('2027-01-31', monthly, 1))).toBe('2027-02-28');
		expect(value(addInterval('2027-01-31', monthly, 2))).toBe('2027-03-31');
		expect(value(addInterval('2027-01-31', monthly, 3))).toBe('2027-04-30');
	});

	it('leap day: 29 February + 1 year is 28 February; + 4 years is 29 February again (but not in 2100)', () => {
		expect(value(addInterval('2028-02-29', { every: 1, unit: 'year' }))).toBe('2029-02-28');
		expect(value(addInterval('2028-02-29', { every: 4, unit: 'year' }))).toBe('2032-02-29');
		expect(value(addInterval('2096-02-29', { every: 4, unit: 'year' }))).toBe('2100-02-28');
		expect(value(addInterval('2028-02-29', { every: 1, unit: 'day' }))).toBe('2028-03-01');
		expect(value(addInterval('2027-02-28', { every: 1, unit: 'day' }))).toBe('2027-03-01');
	});

	it('every month-end of 400 years (one Gregorian cycle) agrees with the leap-year rule', () => {
		for (let year = 2000; year < 2400; year++)
			for (let month = 1; month <= 12; month++) {
				const from = `${year}-${String(month).padStart(2, '0')}-01`;
				const next = value(addInterval(from, { every: 1, unit: 'month' }));
				expect(daysBetween(from, next)).toBe(monthLength(year, month));
			}
	});

	it('weeks and days are whole days; a quarter is three months', () => {
		expect(value(addInterval('2026-12-28', { every: 2, unit: 'week' }))).toBe('2027-01-11');
		expect(value(addInterval('2026-11-30', { every: 3, unit: 'month' }))).toBe('2027-02-28');
		expect(isDay('2027-02-29')).toBe(false);
		expect(isDay('2028-02-29')).toBe(true);
	});
});

describe('daylight-saving changes (the IANA tz data in Node’s Intl)', () => {
	it('Europe/Berlin: the last Sunday of March 2027 has 23 hours, the last Sunday of October 25 (Directive 2000/84/EC)', () => {
		const z = 'Europe/Berlin';
		const start = (d: string) => startOfLocalDay(d, z)!.toISOString();
		expect(start('2027-03-28')).toBe('2027-03-27T23:00:00.000Z'); // +01:00
		expect(start('2027-03-29')).toBe('2027-03-28T22:00:00.000Z'); // +02:00
		expect(start('2027-10-31')).toBe('2027-10-30T22:00:00.000Z'); // +02:00
		expect(start('2027-11-01')).toBe('2027-10-31T23:00:00.000Z'); // +01:00
		// The change itself at 01:00 UTC, as the directive says.
		expect(offsetInZone(new Date('2027-03-28T00:59:59Z'), z)).toBe('+01:00');
		expect(offsetInZone(new Date('2027-03-28T01:00:00Z'), z)).toBe('+02:00');
		expect(offsetInZone(new Date('2027-10-31T00:59:59Z'), z)).toBe('+02:00');
		expect(offsetInZone(new Date('2027-10-31T01:00:00Z'), z)).toBe('+01:00');
	});

	it('a weekly PM across the change is due on the same weekday at the site, whatever the offset', () => {
		const z = 'Europe/Berlin';
		const due = value(addInterval('2027-03-22', { every: 1, unit: 'week' }));
		expect(due).toBe('2027-03-29');
		const hours =
			(startOfLocalDay(due, z)!.getTime() - startOfLocalDay('2027-03-22', z)!.getTime()) /
			3_600_000;
		expect(hours).toBe(7 * 24 - 1); // one hour of the week was skipped
	});

	it('America/New_York: the second Sunday of March 2027 (14 March) starts at −05:00, the next day at −04:00 (15 U.S.C. §260a)', () => {
		const z = 'America/New_York';
		expect(startOfLocalDay('2027-03-14', z)!.toISOString()).toBe('2027-03-14T05:00:00.000Z');
		expect(startOfLocalDay('2027-03-15', z)!.toISOString()).toBe('2027-03-15T04:00:00.000Z');
	});
});

describe('whichever comes first, with lead time and grace window', () => {
	// Twelve months or 100 SIP cycles after the last release; made 14 days or 10 cycles ahead;
	// 14 days or 5 cycles of grace.
	const rule: ScheduleRule = {
		calendar: { every: 12, unit: 'month' },
		usage: { kind: 'sip_cycles', limit: 100 },
		leadDays: 14,
		graceDays: 14,
		leadUsage: 10,
		graceUsage: 5
	};
	const basis = { day: '2026-01-10', usage: 400 };
	const at = (today: string, usage: number) => value(dueStatus(rule, basis, today, usage));

	it('the usage limit decides when the cycles come first', () => {
		expect(at('2026-06-01', 480)).toMatchObject({ state: 'not_due', generateNow: false });
		expect(at('2026-06-01', 490)).toMatchObject({ state: 'due_soon', decidedBy: 'usage' });
		expect(at('2026-06-01', 500)).toMatchObject({
			state: 'due',
			decidedBy: 'usage',
			dueAtUsage: 500,
			dueOn: '2027-01-10'
		});
		expect(at('2026-06-01', 506)).toMatchObject({ state: 'overdue', decidedBy: 'usage' });
	});

	it('the calendar decides when the date comes first', () => {
		expect(at('2026-12-26', 450)).toMatchObject({ state: 'not_due' });
		expect(at('2026-12-27', 450)).toMatchObject({
			state: 'due_soon',
			decidedBy: 'calendar',
			generateFrom: '2026-12-27',
			generateNow: true
		});
		expect(at('2027-01-10', 450)).toMatchObject({ state: 'due', decidedBy: 'calendar' });
		expect(at('2027-01-24', 450)).toMatchObject({ state: 'due', graceEndsOn: '2027-01-24' });
		expect(at('2027-01-25', 450)).toMatchObject({ state: 'overdue', decidedBy: 'calendar' });
	});

	it('the more urgent limit wins: overdue by calendar beats due soon by usage', () => {
		expect(at('2027-02-01', 495)).toMatchObject({ state: 'overdue', decidedBy: 'calendar' });
	});

	it('a schedule by usage only, or by calendar only', () => {
		const usageOnly = { ...rule, calendar: null };
		expect(value(dueStatus(usageOnly, basis, '2030-01-01', 450))).toMatchObject({
			state: 'not_due',
			dueOn: null,
			decidedBy: 'usage'
		});
		const calendarOnly = { ...rule, usage: null };
		expect(value(dueStatus(calendarOnly, basis, '2026-06-01', 9999))).toMatchObject({
			state: 'not_due',
			dueAtUsage: null
		});
	});

	it('bad input is a message, never NaN', () => {
		const refused = (r: { ok: boolean }) => expect(r.ok).toBe(false);
		refused(dueStatus({ ...rule, calendar: null, usage: null }, basis, '2026-06-01', 450));
		refused(dueStatus(rule, { day: '2026-02-30', usage: 0 }, '2026-06-01', 450));
		refused(dueStatus(rule, basis, '2026-06-01', 399));
		refused(dueStatus(rule, basis, '2026-06-01', Number.NaN));
		refused(dueStatus({ ...rule, leadDays: -1 }, basis, '2026-06-01', 450));
		refused(dueStatus({ ...rule, leadUsage: 100 }, basis, '2026-06-01', 450));
		refused(addInterval('2026-01-01', { every: 0, unit: 'day' }));
		refused(addInterval('2026-01-01', { every: 1.5, unit: 'month' }));
		refused(addInterval('9999-12-01', { every: 1, unit: 'month' }));
		expect(startOfLocalDay('2026-13-01', 'Europe/Berlin')).toBeNull();
	});
});

describe('weeks for the 12-week calendar (ISO 8601 week dates)', () => {
	// ISO 8601-1:2019 §5.2.4.3: week 1 is the week with the year's first Thursday; weeks start on Monday.
	it('New Year belongs to the week of its Thursday', () => {
		expect(isoWeek('2026-12-31')).toEqual({ year: 2026, week: 53 }); // 2026 starts on a Thursday
		expect(isoWeek('2027-01-03')).toEqual({ year: 2026, week: 53 });
		expect(isoWeek('2027-01-04')).toEqual({ year: 2027, week: 1 });
		expect(isoWeek('2024-12-30')).toEqual({ year: 2025, week: 1 });
		expect(isoWeek('2026-12-02')).toEqual({ year: 2026, week: 49 });
		expect(mondayOf('2026-12-06')).toBe('2026-11-30');
		expect(mondayOf('2026-11-30')).toBe('2026-11-30');
	});

	it('a usage limit is projected at the recent rate, never later than the rate says', () => {
		expect(projectUsageDay('2026-12-01', 450, 500, 2)).toBe('2026-12-26');
		expect(projectUsageDay('2026-12-01', 450, 500, 3)).toBe('2026-12-17'); // 16.7 days → 16
		expect(projectUsageDay('2026-12-01', 510, 500, 3)).toBe('2026-12-01');
		expect(projectUsageDay('2026-12-01', 450, 500, 0)).toBeNull();
	});
});
