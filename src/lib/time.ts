/**
 * Times in Countersign are stored in UTC (the database clock) and shown in the site's IANA time
 * zone, always with the zone's abbreviation or offset, so that a reader never has to guess.
 */

/** Whether the runtime's tz data knows this IANA zone name. */
export function isTimeZone(name: string): boolean {
	if (!name) return false;
	try {
		new Intl.DateTimeFormat('en-GB', { timeZone: name });
		return true;
	} catch {
		return false;
	}
}

type Parts = Record<Intl.DateTimeFormatPartTypes, string>;

function parts(date: Date, timeZone: string, timeZoneName: 'short' | 'longOffset'): Parts {
	const format = new Intl.DateTimeFormat('en-GB', {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit',
		hour: '2-digit',
		minute: '2-digit',
		second: '2-digit',
		hourCycle: 'h23',
		timeZoneName
	});
	return Object.fromEntries(format.formatToParts(date).map((p) => [p.type, p.value])) as Parts;
}

/**
 * "2026-12-01 19:52 CET": date and time in the zone, with its abbreviation (or "GMT+5:30"
 * style where the zone has none). `seconds` adds ":ss".
 */
export function formatInZone(date: Date, timeZone: string, { seconds = false } = {}): string {
	const p = parts(date, timeZone, 'short');
	const time = `${p.hour}:${p.minute}${seconds ? `:${p.second}` : ''}`;
	return `${p.year}-${p.month}-${p.day} ${time} ${p.timeZoneName}`;
}

/** The zone's offset from UTC at that instant, as "+01:00" (ISO 8601). */
export function offsetInZone(date: Date, timeZone: string): string {
	const name = parts(date, timeZone, 'longOffset').timeZoneName; // "GMT+01:00" or "GMT"
	const offset = name.replace('GMT', '');
	return offset === '' ? '+00:00' : offset;
}
