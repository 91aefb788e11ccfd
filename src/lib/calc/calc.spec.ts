import { describe, expect, it } from 'vitest';
import { compressionPercent, judgeCompression } from './compression';
import { chokedFlow, CV_PER_KV, cvToKv, kv, kvToCv } from './flow';
import { saturationPressure, saturationTemperature } from './steam';
import { crossSequence, tighteningPasses } from './tightening';
import { testUncertaintyRatio } from './tur';
import { convert, quantityOf } from './units';

// The trade's calculations (issue 6/10, first part). Each check names its source; values from
// shared/CHECK-VALUES.md.
const value = <T>(r: { ok: true; value: T } | { ok: false; message: string }) => {
	if (!r.ok) throw new Error(r.message);
	return r.value;
};

describe('flow coefficient, IEC 60534-2-1 (liquid, non-choked turbulent)', () => {
	// IEC 60534-2-1 Example 1 as transcribed in the docs of the open-source `fluids` library:
	// ρ1 = 965.4 kg/m³, P1 = 680 kPa, P2 = 220 kPa, Pv = 70.1 kPa, Pc = 22120 kPa, Q = 360 m³/h, FL = 0.9.
	it('gives Kv = 164.9955 for the worked example (ρ0 = 999.103 kg/m³)', () => {
		expect(value(kv({ flowM3h: 360, dpBar: (680 - 220) / 100, densityKgM3: 965.4 }))).toBeCloseTo(
			164.9955,
			4
		);
	});
	it('FF = 0.944238 and the choking limit 497.19 kPa lies above Δp 460 kPa: not choked', () => {
		const r = value(
			chokedFlow({ p1: 680, p2: 220, vapourPressure: 70.1, criticalPressure: 22120, fl: 0.9 })
		);
		expect(r.ff).toBeCloseTo(0.944238, 6);
		expect(r.limit).toBeCloseTo(497.19, 2);
		expect(r.dp).toBe(460);
		expect(r.choked).toBe(false);
	});
	it('a drop above the limit is choked', () => {
		const r = value(
			chokedFlow({ p1: 680, p2: 100, vapourPressure: 70.1, criticalPressure: 22120, fl: 0.9 })
		);
		expect(r.choked).toBe(true);
	});
	it('Cv = 1.1560992283536566 × Kv (US gallon of 231 in³, lbf/in²; CHECK-VALUES), and back', () => {
		expect(kvToCv(1)).toBe(CV_PER_KV);
		expect(1 / CV_PER_KV).toBeCloseTo(0.865, 3);
		// Property: Kv → Cv → Kv returns the same value (within float rounding) over a range.
		for (let k = 0.01; k < 5000; k *= 1.37) expect(cvToKv(kvToCv(k))).toBeCloseTo(k, 9);
	});
	it('refuses a zero or negative pressure drop, a negative flow, and non-numbers with a message', () => {
		for (const bad of [
			{ flowM3h: 10, dpBar: 0, densityKgM3: 1000 },
			{ flowM3h: 10, dpBar: -1, densityKgM3: 1000 },
			{ flowM3h: -1, dpBar: 1, densityKgM3: 1000 },
			{ flowM3h: Number.NaN, dpBar: 1, densityKgM3: 1000 },
			{ flowM3h: 10, dpBar: 1, densityKgM3: 0 }
		]) {
			const r = kv(bad);
			expect(r.ok).toBe(false);
			if (!r.ok) expect(r.message).toMatch(/\w/);
		}
	});
});

describe('saturated steam, IAPWS-IF97 region 4', () => {
	// The coefficients n1…n10 in steam.ts were written from memory of IF97 Table 34; these
	// verification values of the published tables are what confirms them.
	// IAPWS-IF97 verification values: Table 35 (psat from T) and Table 36 (Tsat from p).
	it.each([
		[300, 0.353658941e-2],
		[500, 2.63889776],
		[600, 12.3443146]
	])('psat(%d K) = %f MPa (IF97 Table 35)', (t, p) => {
		// The table gives 9 significant figures: agreement to a relative 5e-8 is agreement to the table.
		expect(value(saturationPressure(t)) / p).toBeCloseTo(1, 7);
	});
	it.each([
		[0.1, 372.755919],
		[1, 453.035632],
		[10, 584.149488]
	])('Tsat(%f MPa) = %f K (IF97 Table 36)', (p, t) => {
		expect(value(saturationTemperature(p))).toBeCloseTo(t, 5);
	});
	it('121.1 °C ↔ 2.05685 bar abs and 134.0 °C ↔ 3.04199 bar abs (derived in CHECK-VALUES)', () => {
		expect(value(saturationPressure(121.1 + 273.15)) * 10).toBeCloseTo(2.05685, 4);
		expect(value(saturationPressure(134 + 273.15)) * 10).toBeCloseTo(3.04199, 4);
		expect(value(saturationTemperature(0.304199)) - 273.15).toBeCloseTo(134, 2);
	});
	it('refuses temperatures and pressures off the saturation line', () => {
		for (const t of [200, 700, Number.NaN]) expect(saturationPressure(t).ok).toBe(false);
		for (const p of [0, -1, 30, Number.POSITIVE_INFINITY])
			expect(saturationTemperature(p).ok).toBe(false);
	});
});

describe('test uncertainty ratio, ANSI/NCSL Z540.3', () => {
	it('±1.0 psi with U95 = 0.25 psi gives TUR 4.0, which is adequate (Z540.3 handbook example)', () => {
		expect(value(testUncertaintyRatio({ lower: -1, upper: 1, u95: 0.25 }))).toEqual({
			ratio: 4,
			adequate: true
		});
	});
	it('below 4:1 it warns', () => {
		expect(value(testUncertaintyRatio({ lower: 40, upper: 41, u95: 0.2 })).adequate).toBe(false);
	});
	it('refuses an empty tolerance or a zero uncertainty', () => {
		expect(testUncertaintyRatio({ lower: 1, upper: 1, u95: 0.1 }).ok).toBe(false);
		expect(testUncertaintyRatio({ lower: 0, upper: 1, u95: 0 }).ok).toBe(false);
	});
});

describe('units, NIST SP 811 Appendix B.8', () => {
	it('torque: 1 lbf·in = 0.1129848 N·m, 1 lbf·ft = 1.355818 N·m', () => {
		expect(value(convert(1, 'lbf·in', 'N·m'))).toBeCloseTo(0.1129848, 7);
		expect(value(convert(1, 'lbf·ft', 'N·m'))).toBeCloseTo(1.355818, 6);
		expect(value(convert(12, 'lbf·in', 'lbf·ft'))).toBeCloseTo(1, 12);
	});
	it('pressure: 1 psi = 6894.757 Pa = 0.06894757 bar; 1 bar = 1E+05 Pa exactly', () => {
		expect(value(convert(1, 'psi', 'Pa'))).toBeCloseTo(6894.757, 3);
		expect(value(convert(1, 'psi', 'bar'))).toBeCloseTo(0.06894757, 8);
		expect(value(convert(1, 'bar', 'Pa'))).toBe(1e5);
	});
	it('flow: 1 US gal/min = 3.785411784 L/min; 1 m³/h = 1000/60 L/min', () => {
		expect(value(convert(1, 'gal/min', 'L/min'))).toBeCloseTo(3.785411784, 9);
		expect(value(convert(1, 'm³/h', 'L/min'))).toBeCloseTo(1000 / 60, 10);
	});
	it('length: 1 in = 25.4 mm exactly', () => {
		expect(value(convert(1, 'in', 'mm'))).toBeCloseTo(25.4, 12);
	});
	it('temperature: 100 °C = 373.15 K = 212 °F (SP 811 B.8, by definition of the scales)', () => {
		expect(value(convert(100, '°C', 'K'))).toBeCloseTo(373.15, 10);
		expect(value(convert(100, '°C', '°F'))).toBeCloseTo(212, 10);
		expect(value(convert(-40, '°F', '°C'))).toBeCloseTo(-40, 10);
	});
	it('refuses an unknown unit, a mix of quantities, and below absolute zero', () => {
		expect(convert(1, 'furlong', 'mm').ok).toBe(false);
		expect(convert(1, 'bar', 'mm').ok).toBe(false);
		expect(convert(-300, '°C', 'K').ok).toBe(false);
		expect(quantityOf('N·m')).toBe('torque');
	});
});

describe('diaphragm compression (band 10–15 %: common practice, no source)', () => {
	const band = { min: 10, max: 15 };
	it('4.20 mm → 3.65 mm is 13.1 %: within the band', () => {
		expect(value(judgeCompression(4.2, 3.65, band))).toEqual({
			percent: 13.1,
			judgement: 'within'
		});
	});
	it('under and over the band, both ends inclusive', () => {
		expect(value(judgeCompression(4, 3.8, band)).judgement).toBe('under');
		expect(value(judgeCompression(4, 3.2, band)).judgement).toBe('over');
		expect(value(judgeCompression(4, 3.6, band)).judgement).toBe('within'); // exactly 10 %
		expect(value(judgeCompression(4, 3.4, band)).judgement).toBe('within'); // exactly 15 %
	});
	it('refuses zero or negative thickness and after > before, never NaN', () => {
		for (const [b, a] of [
			[0, 0],
			[-1, 1],
			[3, 4],
			[4, 0],
			[Number.NaN, 3]
		])
			expect(compressionPercent(b!, a!).ok).toBe(false);
	});
});

describe('cross-pattern tightening (ASME PCC-1 legacy pattern — from memory, confirm against the standard)', () => {
	it.each([
		[4, [1, 3, 2, 4]],
		[8, [1, 5, 3, 7, 2, 6, 4, 8]],
		[12, [1, 7, 4, 10, 2, 8, 5, 11, 3, 9, 6, 12]]
	])('%d fasteners: %j', (n, sequence) => {
		expect(value(crossSequence(n))).toEqual(sequence);
	});
	it('property: for every count with a pattern, each fastener appears exactly once per pass, opposite pairs together', () => {
		for (let n = 4; n <= 24; n += 4) {
			const passes = value(tighteningPasses(n, 12));
			for (const pass of passes)
				expect([...pass.sequence].sort((a, b) => a - b)).toEqual(
					Array.from({ length: n }, (_, i) => i + 1)
				);
			const cross = passes[1]!.sequence;
			for (let i = 0; i < n; i += 2) expect(cross[i + 1]! - cross[i]!).toBe(n / 2);
		}
	});
	it('targets: snug, 30 %, 70 %, 100 % in cross order, then circular at 100 %, in the equipment’s unit', () => {
		const passes = value(tighteningPasses(8, 20));
		expect(passes.map((p) => p.torque)).toEqual([null, 6, 14, 20, 20]);
		expect(passes.map((p) => p.order)).toEqual(['cross', 'cross', 'cross', 'cross', 'circular']);
	});
	it('never invents a torque, and refuses counts outside 4–24 or without a pattern', () => {
		expect(tighteningPasses(8, null).ok).toBe(false);
		expect(tighteningPasses(8, 0).ok).toBe(false);
		for (const n of [0, 2, 3, 26, 6, 10, 4.5]) expect(crossSequence(n).ok).toBe(false);
	});
});
