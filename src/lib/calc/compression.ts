import { ok, refuse, type Calc } from './result';

/**
 * Diaphragm compression (6/10 item 1): how much the diaphragm is squeezed when the bonnet is
 * tightened, as a percentage of its total (uncompressed) thickness, judged against the
 * equipment's target band. The usual band, 10–15 %, is common practice, no source; the
 * equipment's own band (from the manufacturer's data) always decides.
 */
export type Band = { min: number; max: number };
export type CompressionResult = { percent: number; judgement: 'under' | 'within' | 'over' };

export const judgementWords: Record<CompressionResult['judgement'], string> = {
	under: 'Under the band: tighten further as the manufacturer’s instructions say',
	within: 'Within the band',
	over: 'Over the band: the diaphragm is over-compressed'
};

export function compressionPercent(before: number, after: number): Calc<number> {
	if (!Number.isFinite(before) || !Number.isFinite(after))
		return refuse('Enter both thicknesses as numbers.');
	if (before <= 0) return refuse('The thickness before tightening must be above zero.');
	if (after <= 0) return refuse('The thickness after tightening must be above zero.');
	if (after > before)
		return refuse('The thickness after tightening cannot be more than before: check both values.');
	return ok(((before - after) / before) * 100);
}

/** Within the band includes both ends; the percentage is judged as shown (rounded to `decimals`). */
export function judgeCompression(
	before: number,
	after: number,
	band: Band,
	decimals = 1
): Calc<CompressionResult> {
	if (!(band.min < band.max)) return refuse('The target band of the equipment is not valid.');
	const p = compressionPercent(before, after);
	if (!p.ok) return p;
	const shown = Number(p.value.toFixed(decimals));
	return ok({
		percent: shown,
		judgement: shown < band.min ? 'under' : shown > band.max ? 'over' : 'within'
	});
}
