import { ok, refuse, type Calc } from './result';

/**
 * Test uncertainty ratio (6/10 item 4), ANSI/NCSL Z540.3: the span of the tolerance divided by
 * twice the expanded uncertainty (k = 2, about 95 %) of the reference instrument, in one unit.
 * Below 4:1 the false-accept risk must be estimated, so the step warns.
 */
export const TUR_WARNING_BELOW = 4;

export function testUncertaintyRatio(input: {
	lower: number;
	upper: number;
	u95: number;
}): Calc<{ ratio: number; adequate: boolean }> {
	const { lower, upper, u95 } = input;
	if (![lower, upper, u95].every(Number.isFinite))
		return refuse('Enter the limits and U95 as numbers.');
	if (!(upper > lower)) return refuse('The upper limit must be above the lower limit.');
	if (!(u95 > 0)) return refuse('The instrument’s uncertainty (U95) must be above zero.');
	const ratio = (upper - lower) / (2 * u95);
	return ok({ ratio, adequate: ratio >= TUR_WARNING_BELOW });
}
