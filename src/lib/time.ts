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

/** "2026-12-01T19:52" in the zone (what an `<input type="datetime-local">` holds). */
export function localInputValue(date: Date, timeZone: string): string {
	const p = parts(date, timeZone, 'short');
	return `${p.year}-${p.month}-${p.day}T${p.hour}:${p.minute}`;
}

/**
 * A wall-clock time in the zone ("2026-12-01T19:52", as a datetime-local input gives it) → the
 * instant, or null when it is not a time. In the hour a daylight-saving change repeats, the
 * earlier instant; in the hour it skips, the offset from before the change (so 02:30 on a
 * spring-forward night reads as 03:30 summer time).
 */
export function fromLocalInput(value: string, timeZone: string): Date | null {
	const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})$/.exec(value.trim());
	if (!m) return null;
	const [y, mo, d, h, mi] = m.slice(1).map(Number) as [number, number, number, number, number];
	const asUtc = Date.UTC(y, mo - 1, d, h, mi);
	const check = new Date(asUtc);
	if (check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d || h > 23 || mi > 59) return null;
	const offsetMs = (at: number) => {
		const o = offsetInZone(new Date(at), timeZone);
		const sign = o.startsWith('-') ? -1 : 1;
		const [oh, om] = o.slice(1).split(':').map(Number);
		return sign * ((oh ?? 0) * 60 + (om ?? 0)) * 60_000;
	};
	const day = 86_400_000;
	const before = offsetMs(asUtc - day);
	const after = offsetMs(asUtc + day);
	const text = value.trim();
	const fits = [asUtc - before, asUtc - after]
		.filter((at) => localInputValue(new Date(at), timeZone) === text)
		.sort((a, b) => a - b);
	return new Date(fits[0] ?? asUtc - before);
}
