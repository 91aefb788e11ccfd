import { ok, refuse, type Calc } from './result';

/**
 * Saturated steam (6/10 item 6): IAPWS-IF97 region 4, the saturation line. Saturation pressure
 * from temperature (IF97 eq. 30) and temperature from pressure (eq. 31), valid from the triple
 * point (273.15 K) to the critical point (647.096 K, 22.064 MPa). Coefficients n1…n10: IF97
 * Table 34 (written from memory; the verification values of Tables 35 and 36 confirm them in
 * calc.spec.ts).
 */
const n = [
	0.11670521452767e4, -0.72421316598254e6, -0.17073846940092e2, 0.1202082470247e5,
	-0.32325550322333e7, 0.1491510861353e2, -0.48232657361591e4, 0.40511340542057e6,
	-0.23855557567849, 0.65017534844798e3
] as const;
const [n1, n2, n3, n4, n5, n6, n7, n8, n9, n10] = n;

export const T_MIN = 273.15;
export const T_CRIT = 647.096;
export const P_MIN_MPA = 611.213e-6;
export const P_CRIT_MPA = 22.064;

/** Saturation pressure in MPa at a temperature in kelvin. */
export function saturationPressure(tKelvin: number): Calc<number> {
	if (!Number.isFinite(tKelvin) || tKelvin < T_MIN || tKelvin > T_CRIT)
		return refuse('The temperature must lie between 0 °C and the critical point (373.946 °C).');
	const theta = tKelvin + n9 / (tKelvin - n10);
	const a = theta * theta + n1 * theta + n2;
	const b = n3 * theta * theta + n4 * theta + n5;
	const c = n6 * theta * theta + n7 * theta + n8;
	return ok(((2 * c) / (-b + Math.sqrt(b * b - 4 * a * c))) ** 4);
}

/** Saturation temperature in kelvin at an absolute pressure in MPa. */
export function saturationTemperature(pMpa: number): Calc<number> {
	if (!Number.isFinite(pMpa) || pMpa < P_MIN_MPA || pMpa > P_CRIT_MPA)
		return refuse('The absolute pressure must lie between 611.213 Pa and 22.064 MPa.');
	const beta = pMpa ** 0.25;
	const e = beta * beta + n3 * beta + n6;
	const f = n1 * beta * beta + n4 * beta + n7;
	const g = n2 * beta * beta + n5 * beta + n8;
	const d = (2 * g) / (-f - Math.sqrt(f * f - 4 * e * g));
	return ok((n10 + d - Math.sqrt((n10 + d) ** 2 - 4 * (n9 + n10 * d))) / 2);
}
