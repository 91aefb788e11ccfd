import { ok, refuse, type Calc } from './result';

/**
 * Cross-pattern (star) tightening of a bolted bonnet (6/10 item 3), after the legacy cross
 * pattern of ASME PCC-1 — the sequences and pass targets are from memory (CHECK-VALUES.md) and
 * must be confirmed against the standard. The torque always comes from the equipment's data (the
 * manufacturer's figure); this module never invents one. The manufacturer's instructions and site
 * procedures govern.
 *
 * Fasteners are numbered 1…N clockwise. For N a multiple of 4 the legacy sequence takes the
 * fasteners in opposite pairs (k, k + N/2), the pairs' first members alternating between the
 * first and the second quarter of the circle: 4 → 1-3-2-4, 8 → 1-5-3-7-2-6-4-8,
 * 12 → 1-7-4-10-2-8-5-11-3-9-6-12. Other counts have no legacy pattern here: the equipment's own
 * sequence is needed.
 */
export const MIN_FASTENERS = 4;
export const MAX_FASTENERS = 24;

export function crossSequence(n: number): Calc<number[]> {
	if (!Number.isInteger(n) || n < MIN_FASTENERS || n > MAX_FASTENERS)
		return refuse(`A bonnet here has 4 to 24 fasteners; ${n} is outside that.`);
	if (n % 4 !== 0)
		return refuse(
			`There is no legacy cross pattern for ${n} fasteners: use the sequence from the manufacturer’s instructions.`
		);
	const quarter = n / 4;
	const half = n / 2;
	const sequence: number[] = [];
	for (let i = 0; i < quarter; i++)
		for (const k of [1 + i, 1 + quarter + i]) sequence.push(k, k + half);
	return ok(sequence);
}

export type Pass = {
	name: string;
	/** Target as a share of the final torque (null for snug: hand-tight, at most 20 %). */
	share: number | null;
	/** Target torque in the equipment's unit, or null for snug. */
	torque: number | null;
	order: 'cross' | 'circular';
	sequence: number[];
};

/** The passes: snug, ~30 %, ~70 %, 100 % in cross order, then a circular pass at 100 % (from memory). */
export function tighteningPasses(n: number, finalTorque: number | null): Calc<Pass[]> {
	const cross = crossSequence(n);
	if (!cross.ok) return cross;
	if (finalTorque === null)
		return refuse(
			'The equipment has no final torque from the manufacturer’s data: enter it on the equipment first.'
		);
	if (!Number.isFinite(finalTorque) || finalTorque <= 0)
		return refuse('The final torque must be a number above zero.');
	const circular = Array.from({ length: n }, (_, i) => i + 1);
	const at = (share: number) => Number((finalTorque * share).toFixed(3));
	return ok([
		{
			name: 'Snug (hand-tight, at most 20 %)',
			share: null,
			torque: null,
			order: 'cross',
			sequence: cross.value
		},
		{
			name: 'About 30 % of the final torque',
			share: 0.3,
			torque: at(0.3),
			order: 'cross',
			sequence: cross.value
		},
		{
			name: 'About 70 % of the final torque',
			share: 0.7,
			torque: at(0.7),
			order: 'cross',
			sequence: cross.value
		},
		{
			name: 'Final torque (100 %)',
			share: 1,
			torque: at(1),
			order: 'cross',
			sequence: cross.value
		},
		{
			name: 'Circular at 100 % until no nut turns',
			share: 1,
			torque: at(1),
			order: 'circular',
			sequence: circular
		}
	]);
}

/** One check pass at the final torque in the cross order (a re-tightening check). */
export function checkPasses(n: number, finalTorque: number | null): Calc<Pass[]> {
	const full = tighteningPasses(n, finalTorque);
	if (!full.ok) return full;
	const last = full.value[3]!;
	return ok([{ ...last, name: 'Check at 100 % in the cross pattern' }]);
}

/** The passes a tightening field guides, by its pattern. */
export const passesFor = (pattern: 'full' | 'check', n: number, finalTorque: number | null) =>
	pattern === 'check' ? checkPasses(n, finalTorque) : tighteningPasses(n, finalTorque);
