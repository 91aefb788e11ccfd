import { describe, expect, it } from 'vitest';
import { formatInZone, fromLocalInput, isTimeZone, localInputValue, offsetInZone } from './time';

// Source for every expected value: the IANA tz database (tzdata), rules "EU" (Europe/Berlin:
// CET +01:00, CEST +02:00 from the last Sunday of March 01:00 UTC to the last Sunday of October
// 01:00 UTC), "US" (America/New_York) and Asia/Kolkata (+05:30, no DST), as carried by Node's Intl.
describe('formatInZone', () => {
	it('shows winter time in Berlin as CET (tzdata, rule EU)', () => {
		expect(formatInZone(new Date('2026-12-01T18:49:00Z'), 'Europe/Berlin')).toBe(
			'2026-12-01 19:49 CET'
		);
	});

	it('switches to CEST at 01:00 UTC on the last Sunday of March 2026 (29 March; tzdata, rule EU)', () => {
		expect(formatInZone(new Date('2026-03-29T00:59:59Z'), 'Europe/Berlin', { seconds: true })).toBe(
			'2026-03-29 01:59:59 CET'
		);
		expect(formatInZone(new Date('2026-03-29T01:00:00Z'), 'Europe/Berlin', { seconds: true })).toBe(
			'2026-03-29 03:00:00 CEST'
		);
	});

	it('shows the date as the site sees it, not as UTC does', () => {
		// 23:30 UTC on 31 Dec is already New Year in Berlin (+01:00).
		expect(formatInZone(new Date('2026-12-31T23:30:00Z'), 'Europe/Berlin')).toBe(
			'2027-01-01 00:30 CET'
		);
	});

	it('keeps UTC as UTC', () => {
		expect(formatInZone(new Date('2026-06-01T12:00:00Z'), 'UTC')).toBe('2026-06-01 12:00 UTC');
	});
});

describe('offsetInZone', () => {
	it('gives ISO 8601 offsets (tzdata)', () => {
		expect(offsetInZone(new Date('2026-01-15T12:00:00Z'), 'Europe/Berlin')).toBe('+01:00');
		expect(offsetInZone(new Date('2026-07-15T12:00:00Z'), 'Europe/Berlin')).toBe('+02:00');
		expect(offsetInZone(new Date('2026-07-15T12:00:00Z'), 'America/New_York')).toBe('-04:00');
		expect(offsetInZone(new Date('2026-07-15T12:00:00Z'), 'Asia/Kolkata')).toBe('+05:30');
		expect(offsetInZone(new Date('2026-07-15T12:00:00Z'), 'UTC')).toBe('+00:00');
	});
});

describe('isTimeZone', () => {
	it('accepts IANA names and rejects others', () => {
		expect(isTimeZone('Europe/Berlin')).toBe(true);
		expect(isTimeZone('America/Argentina/Buenos_Aires')).toBe(true);
		expect(isTimeZone('Mars/Olympus_Mons')).toBe(false);
		expect(isTimeZone('')).toBe(false);
	});
});

// Daylight-saving dates of Europe/Berlin in 2026 (EU rule: last Sunday of March and of October
// at 01:00 UTC — Directive 2000/84/EC), as the IANA tz data in Node's Intl carries them.
describe('fromLocalInput / localInputValue', () => {
	it('reads a wall-clock time in the zone', () => {
		expect(fromLocalInput('2026-12-01T19:52', 'Europe/Berlin')?.toISOString()).toBe(
			'2026-12-01T18:52:00.000Z'
		);
		expect(fromLocalInput('2026-07-01T12:00', 'Europe/Berlin')?.toISOString()).toBe(
			'2026-07-01T10:00:00.000Z'
		);
		expect(fromLocalInput('2026-12-01T10:00', 'UTC')?.toISOString()).toBe(
			'2026-12-01T10:00:00.000Z'
		);
	});
	it('takes the earlier instant in the repeated hour and moves past the skipped one', () => {
		expect(fromLocalInput('2026-10-25T02:30', 'Europe/Berlin')?.toISOString()).toBe(
			'2026-10-25T00:30:00.000Z'
		);
		expect(fromLocalInput('2026-03-29T02:30', 'Europe/Berlin')?.toISOString()).toBe(
			'2026-03-29T01:30:00.000Z'
		);
	});
	it('refuses what is not a time', () => {
		for (const bad of ['', 'now', '2026-02-30T10:00', '2026-12-01T24:00', '2026-12-01 10:00'])
			expect(fromLocalInput(bad, 'Europe/Berlin')).toBeNull();
	});
	it('round-trips with localInputValue', () => {
		const at = new Date('2026-12-01T18:52:00.000Z');
		expect(localInputValue(at, 'Europe/Berlin')).toBe('2026-12-01T19:52');
		expect(fromLocalInput(localInputValue(at, 'Europe/Berlin'), 'Europe/Berlin')).toEqual(at);
	});
});
