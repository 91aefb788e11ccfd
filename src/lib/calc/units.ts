import { ok, refuse, type Calc } from './result';

/**
 * Units the steps need (6/10 item 5), with the conversion factors of NIST SP 811 Appendix B.8
 * (the exact values from the definitions where SP 811 rounds them). A value is stored with its
 * unit and converted for a limits check; temperature is affine (offsets), the rest are factors.
 */
const LBF_IN_NM = 0.11298482902761668;
const LBF_FT_NM = 1.3558179483314003;
const PSI_PA = 6894.757293168361;
const US_GALLON_M3 = 3.785411784e-3;

type Linear = Record<string, number>;
const quantities: Record<string, Linear> = {
	torque: { 'N·m': 1, 'lbf·in': LBF_IN_NM, 'lbf·ft': LBF_FT_NM },
	pressure: { Pa: 1, kPa: 1e3, MPa: 1e6, bar: 1e5, mbar: 100, psi: PSI_PA },
	flow: {
		'm³/h': 1 / 3600,
		'L/min': 1e-3 / 60,
		'L/h': 1e-3 / 3600,
		'gal/min': US_GALLON_M3 / 60
	},
	length: { m: 1, mm: 1e-3, µm: 1e-6, in: 0.0254 }
};
const temperature = ['°C', 'K', '°F'] as const;

export type Quantity = keyof typeof quantities | 'temperature';

export function quantityOf(unit: string): Quantity | undefined {
	if ((temperature as readonly string[]).includes(unit)) return 'temperature';
	return Object.keys(quantities).find((q) => unit in quantities[q]!) as Quantity | undefined;
}

const toKelvin = (v: number, unit: string) =>
	unit === 'K' ? v : unit === '°C' ? v + 273.15 : ((v - 32) * 5) / 9 + 273.15;
const fromKelvin = (k: number, unit: string) =>
	unit === 'K' ? k : unit === '°C' ? k - 273.15 : ((k - 273.15) * 9) / 5 + 32;

/** Converts a value between two units of one quantity; an unknown unit or a mix is refused. */
export function convert(value: number, from: string, to: string): Calc<number> {
	if (!Number.isFinite(value)) return refuse('Enter the value as a number.');
	const q = quantityOf(from);
	if (!q) return refuse(`The unit “${from}” is not known here.`);
	if (quantityOf(to) !== q) return refuse(`“${from}” cannot be converted to “${to}”.`);
	if (q === 'temperature') {
		const k = toKelvin(value, from);
		if (k < 0) return refuse('That is below absolute zero.');
		return ok(fromKelvin(k, to));
	}
	const table = quantities[q]!;
	return ok((value * table[from]!) / table[to]!);
}

/** The units of a quantity, as this module knows them. */
export function unitsOf(q: Quantity): string[] {
	return q === 'temperature' ? [...temperature] : Object.keys(quantities[q]!);
}
