import { describe, expect, it } from 'vitest';
import { addDays, instrumentFitnessOn, qualifiedOn, siteToday } from './fitness';

// MR3 (21 CFR 211.68(a), 211.160(b)(4)): an instrument is usable only inside a passed calibration's
// interval; AC4 (21 CFR 11.10(i)): only currently qualified people sign. The interval rule —
// usable from the calibration day through the due date inclusive — is common practice, no source.
describe('instrumentFitnessOn (MR3)', () => {
	const cal = { performedOn: '2026-01-10', dueOn: '2026-07-10', asLeft: 'pass' as const, seq: 1 };

	it('is usable on the calibration day, inside the interval and on the due date', () => {
		for (const day of ['2026-01-10', '2026-04-01', '2026-07-10'])
			expect(instrumentFitnessOn([cal], day).usable).toBe(true);
	});
	it('is unusable the day after the due date (expired)', () => {
		expect(instrumentFitnessOn([cal], '2026-07-11')).toMatchObject({
			usable: false,
			why: 'expired'
		});
	});
	it('is unusable before any calibration', () => {
		expect(instrumentFitnessOn([cal], '2026-01-09')).toMatchObject({
			usable: false,
			why: 'never_calibrated'
		});
		expect(instrumentFitnessOn([], '2026-03-01')).toMatchObject({
			usable: false,
			why: 'never_calibrated'
		});
	});
	it('is unusable after a failed calibration, even inside the earlier interval', () => {
		const failed = {
			performedOn: '2026-03-01',
			dueOn: '2026-09-01',
			asLeft: 'fail' as const,
			seq: 2
		};
		expect(instrumentFitnessOn([cal, failed], '2026-03-02')).toMatchObject({
			usable: false,
			why: 'failed'
		});
		// …but on a day before the failed calibration, the earlier one was in force.
		expect(instrumentFitnessOn([cal, failed], '2026-02-28').usable).toBe(true);
	});
	it('takes the later record of two on the same day', () => {
		const redo = { ...cal, asLeft: 'fail' as const, seq: 5 };
		expect(instrumentFitnessOn([redo, cal], '2026-02-01')).toMatchObject({
			usable: false,
			why: 'failed'
		});
	});
	it('is never usable once withdrawn', () => {
		expect(instrumentFitnessOn([cal], '2026-02-01', true)).toMatchObject({
			usable: false,
			why: 'retired'
		});
	});
});

describe('qualifiedOn (AC4)', () => {
	const records = [{ trainedOn: '2025-01-01', expiresOn: '2025-12-31' }];
	it('covers the training day through the expiry day', () => {
		expect(qualifiedOn(records, '2025-01-01')).toBe(true);
		expect(qualifiedOn(records, '2025-12-31')).toBe(true);
	});
	it('has lapsed after the expiry day and does not hold before training', () => {
		expect(qualifiedOn(records, '2026-01-01')).toBe(false);
		expect(qualifiedOn(records, '2024-12-31')).toBe(false);
	});
	it('stops counting from the day a record is withdrawn, and not before', () => {
		const withdrawn = [{ ...records[0]!, withdrawnOn: '2025-06-01' }];
		expect(qualifiedOn(withdrawn, '2025-05-31')).toBe(true);
		expect(qualifiedOn(withdrawn, '2025-06-01')).toBe(false);
	});
	it('is renewed by a later record', () => {
		expect(
			qualifiedOn([...records, { trainedOn: '2026-01-05', expiresOn: '2026-12-31' }], '2026-06-01')
		).toBe(true);
	});
});

describe('calendar days', () => {
	// Gregorian calendar: 2028 is a leap year (divisible by 4, not by 100); 2100 is not (divisible by
	// 100, not by 400) — ISO 8601 / the proleptic Gregorian rules.
	it('adds days across month ends and leap days', () => {
		expect(addDays('2028-02-28', 1)).toBe('2028-02-29');
		expect(addDays('2100-02-28', 1)).toBe('2100-03-01');
		expect(addDays('2026-12-31', 1)).toBe('2027-01-01');
		expect(addDays('2026-03-01', -1)).toBe('2026-02-28');
		expect(addDays('2026-12-01', 30)).toBe('2026-12-31');
	});
	it('gives today in the site’s zone, not the server’s (IANA tz data in Node’s Intl)', () => {
		// 2026-12-31 23:30 UTC is already 2027-01-01 00:30 in Berlin (CET, UTC+1) and still
		// 2026-12-31 in New York (EST, UTC−5).
		const instant = new Date('2026-12-31T23:30:00Z');
		expect(siteToday('Europe/Berlin', instant)).toBe('2027-01-01');
		expect(siteToday('America/New_York', instant)).toBe('2026-12-31');
	});
});
