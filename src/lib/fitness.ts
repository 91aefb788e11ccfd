/**
 * Whether a reference instrument may be used, and whether a person is qualified, on a given
 * calendar day (site time). Pure functions over the append-only records, used by the server to
 * decide and by the pages to show (MR3, AC4; ANSI/NCSL Z540.3 calibration intervals).
 * Days are ISO dates (YYYY-MM-DD), compared as text, which orders them correctly.
 */
export type CalibrationFacts = {
	performedOn: string;
	dueOn: string;
	asLeft: 'pass' | 'fail';
	/** Order of recording, for two calibrations on one day: the later record wins. */
	seq: number;
};

export type InstrumentFitness =
	| { usable: true; calibration: CalibrationFacts }
	| {
			usable: false;
			why: 'never_calibrated' | 'failed' | 'expired' | 'retired';
			calibration?: CalibrationFacts;
	  };

/**
 * The calibration in force on `day` is the latest one performed on or before it. The instrument
 * is usable if that calibration's as-left result passed and `day` is not after its due date.
 */
export function instrumentFitnessOn(
	calibrations: readonly CalibrationFacts[],
	day: string,
	retired = false
): InstrumentFitness {
	if (retired) return { usable: false, why: 'retired' };
	const inForce = calibrations
		.filter((c) => c.performedOn <= day)
		.sort((a, b) =>
			a.performedOn === b.performedOn ? a.seq - b.seq : a.performedOn < b.performedOn ? -1 : 1
		)
		.at(-1);
	if (!inForce) return { usable: false, why: 'never_calibrated' };
	if (inForce.asLeft !== 'pass') return { usable: false, why: 'failed', calibration: inForce };
	if (day > inForce.dueOn) return { usable: false, why: 'expired', calibration: inForce };
	return { usable: true, calibration: inForce };
}

export const fitnessWords: Record<Exclude<InstrumentFitness, { usable: true }>['why'], string> = {
	never_calibrated: 'Not calibrated',
	failed: 'Failed calibration',
	expired: 'Calibration expired',
	retired: 'Withdrawn from use'
};

export type TrainingFacts = { trainedOn: string; expiresOn: string; withdrawnOn?: string | null };

/** Whether one training record covers `day`: trained on ≤ day ≤ expires on, and not withdrawn by then. */
export const covers = (r: TrainingFacts, day: string) =>
	r.trainedOn <= day && day <= r.expiresOn && !(r.withdrawnOn && r.withdrawnOn <= day);

/** Qualified on `day` if a training record of the procedure covers it. */
export function qualifiedOn(records: readonly TrainingFacts[], day: string): boolean {
	return records.some((r) => covers(r, day));
}

/** The day `days` after an ISO date (calendar arithmetic in UTC, no time of day involved). */
export function addDays(day: string, days: number): string {
	const d = new Date(`${day}T00:00:00Z`);
	d.setUTCDate(d.getUTCDate() + days);
	return d.toISOString().slice(0, 10);
}

/** Today's date at the site, as YYYY-MM-DD in its IANA time zone. */
export function siteToday(timeZone: string, now = new Date()): string {
	return new Intl.DateTimeFormat('en-CA', {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit'
	}).format(now);
}
