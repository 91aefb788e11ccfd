import { ok, refuse, type Calc } from './result';

/**
 * Valve flow coefficient for liquids (6/10 item 2), IEC 60534-2-1, non-choked turbulent flow:
 * Kv = Q·√((ρ1/ρ0)/Δp) with Q in m³/h and Δp in bar; ρ0 is water at 15 °C, 999.103 kg/m³.
 * Choked flow where Δp ≥ FL²·(P1 − FF·Pv), FF = 0.96 − 0.28·√(Pv/Pc).
 */
export const WATER_15C = 999.103; // kg/m³, IEC 60534-2-1
/** Cv per Kv, from the US gallon (231 in³) and the pound-force per square inch. */
export const CV_PER_KV = 1.1560992283536566;

export function kv(input: { flowM3h: number; dpBar: number; densityKgM3: number }): Calc<number> {
	const { flowM3h, dpBar, densityKgM3 } = input;
	if (![flowM3h, dpBar, densityKgM3].every(Number.isFinite))
		return refuse('Enter the flow, the pressure drop and the density as numbers.');
	if (flowM3h < 0) return refuse('The flow cannot be negative.');
	if (dpBar <= 0) return refuse('The pressure drop must be above zero.');
	if (densityKgM3 <= 0) return refuse('The density must be above zero.');
	return ok(flowM3h * Math.sqrt(densityKgM3 / WATER_15C / dpBar));
}

/** The liquid critical pressure ratio factor FF (IEC 60534-2-1). */
export function ff(vapourPressure: number, criticalPressure: number): Calc<number> {
	if (!(vapourPressure >= 0) || !(criticalPressure > 0) || vapourPressure > criticalPressure)
		return refuse('The vapour pressure must be between zero and the critical pressure.');
	return ok(0.96 - 0.28 * Math.sqrt(vapourPressure / criticalPressure));
}

/** The pressure drop at which the flow chokes, and whether the given drop reaches it (pressures in one unit). */
export function chokedFlow(input: {
	p1: number;
	p2: number;
	vapourPressure: number;
	criticalPressure: number;
	fl: number;
}): Calc<{ dp: number; limit: number; ff: number; choked: boolean }> {
	const { p1, p2, vapourPressure, criticalPressure, fl } = input;
	if (![p1, p2, fl].every(Number.isFinite)) return refuse('Enter the pressures as numbers.');
	if (p2 > p1) return refuse('The outlet pressure cannot be above the inlet pressure.');
	if (!(fl > 0 && fl <= 1)) return refuse('FL is between 0 and 1.');
	const f = ff(vapourPressure, criticalPressure);
	if (!f.ok) return f;
	const limit = fl * fl * (p1 - f.value * vapourPressure);
	const dp = p1 - p2;
	return ok({ dp, limit, ff: f.value, choked: dp >= limit });
}

export const kvToCv = (kvValue: number) => kvValue * CV_PER_KV;
export const cvToKv = (cvValue: number) => cvValue / CV_PER_KV;
