import { describe, expect, it } from 'vitest';
import {
	describeFit,
	fitWeibull,
	gamma,
	lifeAtReliability,
	logGamma,
	reliabilityAt,
	weibullLogLikelihood,
	type Observation,
	type WeibullFit
} from './weibull';

// The Weibull reliability fit (issue 9/10 item 6). Each check names its source; the worked
// example is in shared/CHECK-VALUES.md.
const value = <T>(r: { ok: true; value: T } | { ok: false; message: string }) => {
	if (!r.ok) throw new Error(r.message);
	return r.value;
};
const failed = (times: number[]): Observation[] => times.map((time) => ({ time, failed: true }));
const inService = (times: number[]): Observation[] =>
	times.map((time) => ({ time, failed: false }));

// NIST/SEMATECH e-Handbook of Statistical Methods §8.4.1.3 (maximum likelihood, Weibull example):
// ten failures and ten units removed unfailed at 500 h.
const nist = [
	...failed([54, 187, 216, 240, 244, 335, 361, 373, 375, 386]),
	...inService(Array(10).fill(500))
];

/** Inverse-CDF sample of a Weibull(β, η) at the midpoints (i − ½)/n: deterministic, evenly spread. */
const sample = (beta: number, eta: number, n: number): number[] =>
	Array.from({ length: n }, (_, i) => eta * (-Math.log(1 - (i + 0.5) / n)) ** (1 / beta));

const numbersIn = (x: unknown): number[] =>
	typeof x === 'number'
		? [x]
		: typeof x === 'object' && x !== null
			? Object.values(x).flatMap(numbersIn)
			: [];

describe('gamma function (Lanczos)', () => {
	// NIST Digital Library of Mathematical Functions §5.4(ii): Γ(1/2) = √π, Γ(n + 1) = n!
	// (from memory), and Γ(3/2) = ½Γ(1/2) by the recurrence Γ(x + 1) = xΓ(x) (DLMF 5.5.1, from memory).
	it('Γ(0.5) = √π, Γ(1.5) = √π/2, Γ(5) = 24', () => {
		expect(gamma(0.5) / Math.sqrt(Math.PI)).toBeCloseTo(1, 13);
		expect(gamma(1.5) / (Math.sqrt(Math.PI) / 2)).toBeCloseTo(1, 13);
		expect(gamma(5) / 24).toBeCloseTo(1, 13);
	});
	it('Γ(n + 1) = n! and Γ(x + 1) = xΓ(x) over a range (DLMF 5.4.1, 5.5.1, from memory)', () => {
		let factorial = 1;
		for (let k = 1; k <= 20; k++) {
			factorial *= k;
			expect(gamma(k + 1) / factorial).toBeCloseTo(1, 12);
		}
		for (let x = 0.05; x < 60; x *= 1.3)
			expect(logGamma(x + 1) - Math.log(x) - logGamma(x)).toBeCloseTo(0, 11);
	});
	it('is NaN (never a silent number) outside x > 0; the fit never passes it such an x', () => {
		expect(logGamma(0)).toBeNaN();
		expect(logGamma(-1)).toBeNaN();
	});
});

describe('Weibull fit, NIST/SEMATECH e-Handbook §8.4.1.3 worked example', () => {
	const fit = value(fitWeibull(nist));
	it('η = 606.5280, β = 1.7208 (to 1e-3 relative)', () => {
		expect(Math.abs(fit.eta / 606.528 - 1)).toBeLessThan(1e-3);
		expect(Math.abs(fit.beta / 1.7208 - 1)).toBeLessThan(1e-3);
		expect(fit.r).toBe(10);
		expect(fit.n).toBe(20);
	});
	it('log-likelihood −75.135 (to 1e-3 absolute)', () => {
		expect(Math.abs(fit.logLikelihood - -75.135)).toBeLessThan(1e-3);
	});
	it('the log-likelihood of the fit agrees with the likelihood written out separately', () => {
		expect(value(weibullLogLikelihood(nist, fit.beta, fit.eta))).toBeCloseTo(fit.logLikelihood, 10);
	});
	it('the order of the observations does not matter', () => {
		const shuffled = [...nist].reverse();
		const again = value(fitWeibull(shuffled));
		expect(again.beta).toBeCloseTo(fit.beta, 10);
		expect(again.eta).toBeCloseTo(fit.eta, 8);
	});
	it('mean life = η·Γ(1 + 1/β)', () => {
		expect(fit.meanLife / (fit.eta * gamma(1 + 1 / fit.beta))).toBeCloseTo(1, 12);
	});
});

describe('Weibull fit: maximum and information', () => {
	const fit = value(fitWeibull(nist));
	const ll = (a: number, b: number) => value(weibullLogLikelihood(nist, Math.exp(a), Math.exp(b)));
	const a0 = Math.log(fit.beta);
	const b0 = Math.log(fit.eta);
	it('is a maximum: every nearby (β, η) has a lower likelihood', () => {
		for (const [da, db] of [
			[1e-3, 0],
			[-1e-3, 0],
			[0, 1e-3],
			[0, -1e-3],
			[1e-3, 1e-3],
			[-1e-3, 1e-3]
		] as [number, number][])
			expect(ll(a0 + da, b0 + db)).toBeLessThan(fit.logLikelihood);
	});
	it('the covariance is the inverse of the numerical negative Hessian in (ln β, ln η)', () => {
		// Central finite differences of the log-likelihood (a check independent of the
		// analytic derivatives in weibull.ts).
		const h = 1e-4;
		const f0 = ll(a0, b0);
		const haa = (ll(a0 + h, b0) - 2 * f0 + ll(a0 - h, b0)) / h ** 2;
		const hbb = (ll(a0, b0 + h) - 2 * f0 + ll(a0, b0 - h)) / h ** 2;
		const hab =
			(ll(a0 + h, b0 + h) - ll(a0 + h, b0 - h) - ll(a0 - h, b0 + h) + ll(a0 - h, b0 - h)) /
			(4 * h * h);
		const det = haa * hbb - hab * hab;
		expect(fit.covLog.lnBeta / (-hbb / det)).toBeCloseTo(1, 4);
		expect(fit.covLog.lnEta / (-haa / det)).toBeCloseTo(1, 4);
		expect(fit.covLog.cross / (hab / det)).toBeCloseTo(1, 4);
	});
	it('complete samples: SE(β) → β·√(6/(π²n)), SE(η) → (η/β)·√((1 + 6(1−γ)²/π²)/n)', () => {
		// The expected Fisher information of a complete Weibull sample (from memory; it follows
		// from E[z ln z] = 1 − γ and E[z ln² z] = π²/6 − 1 + (1 − γ)² for z ~ Exp(1)).
		// On an evenly spread sample the observed information approaches it.
		const n = 4000;
		const [beta, eta] = [2.5, 800];
		const f = value(fitWeibull(failed(sample(beta, eta, n))));
		const euler = 0.5772156649015329;
		expect(f.seBeta / (beta * Math.sqrt(6 / (Math.PI ** 2 * n)))).toBeCloseTo(1, 1);
		const seEta = (eta / beta) * Math.sqrt((1 + (6 * (1 - euler) ** 2) / Math.PI ** 2) / n);
		expect(f.seEta / seEta).toBeCloseTo(1, 1);
	});
});

describe('Weibull fit: properties', () => {
	it.each([
		[0.7, 50],
		[1, 200],
		[2.5, 1000],
		[6, 30]
	])('recovers β = %f, η = %f from a complete sample of 2000', (beta, eta) => {
		const f = value(fitWeibull(failed(sample(beta, eta, 2000))));
		expect(Math.abs(f.beta / beta - 1)).toBeLessThan(0.02);
		expect(Math.abs(f.eta / eta - 1)).toBeLessThan(0.02);
		// The sample mean approaches the mean life η·Γ(1 + 1/β).
		const mean = sample(beta, eta, 2000).reduce((s, t) => s + t, 0) / 2000;
		expect(Math.abs(f.meanLife / mean - 1)).toBeLessThan(0.02);
	});
	it('scaling every time by k scales η by k and leaves β unchanged', () => {
		const base = value(fitWeibull(nist));
		for (const k of [1e-3, 0.37, 24, 1e5]) {
			const scaled = value(fitWeibull(nist.map((o) => ({ ...o, time: o.time * k }))));
			expect(scaled.beta / base.beta).toBeCloseTo(1, 9);
			expect(scaled.eta / (base.eta * k)).toBeCloseTo(1, 9);
			expect(scaled.covLog.lnBeta / base.covLog.lnBeta).toBeCloseTo(1, 6);
		}
	});
	it('adding units still in service beyond the last failure raises η', () => {
		let previous = value(fitWeibull(nist)).eta;
		for (const extra of [1, 5, 20]) {
			const more = value(fitWeibull([...nist, ...inService(Array(extra).fill(600))])).eta;
			expect(more).toBeGreaterThan(previous);
			previous = more;
		}
	});
	it('lifeAtReliability(fit, reliabilityAt(fit, t)) = t', () => {
		const fit = value(fitWeibull(nist));
		for (const t of [1, 54, 163, 500, 1500]) {
			const r = value(reliabilityAt(fit, t));
			expect(value(lifeAtReliability(fit, r)).life / t).toBeCloseTo(1, 9);
		}
		expect(value(reliabilityAt(fit, 0))).toBe(1);
		expect(value(reliabilityAt(fit, fit.eta))).toBeCloseTo(Math.exp(-1), 12);
	});
	it('the B10 life is where 10 % have failed; lower reliability gives a longer life', () => {
		const fit = value(fitWeibull(nist));
		const b10 = value(lifeAtReliability(fit, 0.9)).life;
		expect(1 - value(reliabilityAt(fit, b10))).toBeCloseTo(0.1, 12);
		expect(value(lifeAtReliability(fit, 0.5)).life).toBeGreaterThan(b10);
		expect(value(lifeAtReliability(fit, 0.99)).life).toBeLessThan(b10);
	});
	it('bounds contain the estimate and lower < upper; more data narrows them', () => {
		const fits = [nist, failed(sample(1.5, 300, 30)), failed(sample(1.5, 300, 300))].map((o) =>
			value(fitWeibull(o))
		);
		for (const f of fits) {
			expect(f.betaBounds.lower).toBeLessThan(f.beta);
			expect(f.beta).toBeLessThan(f.betaBounds.upper);
			expect(f.etaBounds.lower).toBeLessThan(f.eta);
			expect(f.eta).toBeLessThan(f.etaBounds.upper);
			expect(f.betaBounds.lower).toBeGreaterThan(0);
			for (const r of [0.5, 0.9, 0.99]) {
				const l = value(lifeAtReliability(f, r));
				expect(l.lower).toBeGreaterThan(0);
				expect(l.lower).toBeLessThan(l.life);
				expect(l.life).toBeLessThan(l.upper);
			}
		}
		const width = (f: WeibullFit) => f.betaBounds.upper / f.betaBounds.lower;
		const [, thirty, threeHundred] = fits;
		expect(thirty && threeHundred).toBeTruthy();
		if (thirty && threeHundred) expect(width(threeHundred)).toBeLessThan(width(thirty));
	});
	it('bounds are ±1.959964 standard errors on the log scale', () => {
		const f = value(fitWeibull(nist));
		const seLn = Math.sqrt(f.covLog.lnBeta);
		expect(Math.log(f.betaBounds.upper / f.beta)).toBeCloseTo(1.959964 * seLn, 10);
		expect(Math.log(f.beta / f.betaBounds.lower)).toBeCloseTo(1.959964 * seLn, 10);
		expect(f.seBeta).toBeCloseTo(f.beta * seLn, 10);
	});
	it('life bounds: the delta method on ln t with a numerical gradient in (ln β, ln η)', () => {
		const f = value(fitWeibull(nist));
		// At R = e⁻¹ the life is η itself, so its bounds are η's.
		const atEta = value(lifeAtReliability(f, Math.exp(-1)));
		expect(atEta.lower / f.etaBounds.lower).toBeCloseTo(1, 9);
		expect(atEta.upper / f.etaBounds.upper).toBeCloseTo(1, 9);
		const h = 1e-6;
		for (const r of [0.5, 0.9, 0.99]) {
			const lnLife = (a: number, b: number) =>
				Math.log(value(lifeAtReliability({ ...f, beta: Math.exp(a), eta: Math.exp(b) }, r)).life);
			const [a, b] = [Math.log(f.beta), Math.log(f.eta)];
			const ga = (lnLife(a + h, b) - lnLife(a - h, b)) / (2 * h);
			const gb = (lnLife(a, b + h) - lnLife(a, b - h)) / (2 * h);
			const { lnBeta, lnEta, cross } = f.covLog;
			const se = Math.sqrt(ga * ga * lnBeta + gb * gb * lnEta + 2 * ga * gb * cross);
			const l = value(lifeAtReliability(f, r));
			expect(Math.log(l.upper / l.life) / (1.959964 * se)).toBeCloseTo(1, 6);
			expect(Math.log(l.life / l.lower) / (1.959964 * se)).toBeCloseTo(1, 6);
		}
	});
	it('no NaN or Infinity anywhere in an ok result', () => {
		for (const obs of [
			nist,
			failed([1, 2]),
			failed(sample(0.5, 1e6, 50)),
			failed(sample(40, 1, 50))
		]) {
			const f = value(fitWeibull(obs));
			for (const x of numbersIn(f)) expect(Number.isFinite(x)).toBe(true);
			for (const x of numbersIn(value(lifeAtReliability(f, 0.9))))
				expect(Number.isFinite(x)).toBe(true);
		}
	});
});

describe('Weibull fit: refusals', () => {
	const refused = (r: { ok: boolean; message?: string }, pattern: RegExp) => {
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.message).toMatch(pattern);
	};
	it('no observations', () => refused(fitWeibull([]), /no observations/i));
	it.each([0, -5, Number.NaN, Number.POSITIVE_INFINITY])('a time of %f', (t) =>
		refused(fitWeibull([...nist, { time: t, failed: true }]), /Observation 21.*above zero/)
	);
	it('a time that is not a number at all, or a missing failed flag', () => {
		refused(fitWeibull([{ time: '12' as unknown as number, failed: true }]), /above zero/);
		refused(fitWeibull([{ time: 12 } as unknown as Observation]), /failed or is still in service/);
	});
	it('fewer than two failures', () => {
		refused(fitWeibull(failed([100])), /at least two failures/i);
		refused(fitWeibull([...failed([100]), ...inService([50, 200])]), /at least two failures/i);
		refused(fitWeibull(inService([50, 200])), /at least two failures/i);
	});
	it('all failures at the same time', () =>
		refused(fitWeibull([...failed([120, 120, 120]), ...inService([90])]), /same time/));
	it('failure times too close together for the fit to converge', () =>
		refused(fitWeibull(failed([100, 100.0000001])), /did not converge/));
	it('a reliability outside (0, 1), and a bad time for reliabilityAt', () => {
		const fit = value(fitWeibull(nist));
		for (const r of [0, 1, -0.1, 1.5, Number.NaN])
			refused(lifeAtReliability(fit, r), /reliability/);
		for (const t of [-1, Number.NaN]) refused(reliabilityAt(fit, t), /time/);
		expect(describeFit(fit, 1, 'hours')).toMatch(/Choose a reliability/);
	});
	it('the log-likelihood refuses a shape or scale that is not above zero', () => {
		refused(weibullLogLikelihood(nist, 0, 100), /above zero/);
		refused(weibullLogLikelihood(nist, 1, Number.NaN), /above zero/);
	});
});

describe('describeFit: the interval in words', () => {
	const fit = value(fitWeibull(nist));
	const text = describeFit(fit, 0.9, 'SIP cycles', 'diaphragms');
	const life = value(lifeAtReliability(fit, 0.9));
	const figures = (s: string) => [...s.matchAll(/\d+(?:\.\d+)?/g)].map((m) => Number(m[0]));
	it('says the counts, the reliability, the life and its range, rounded', () => {
		expect(text).toMatch(
			/^From 10 recorded failures and 10 still in service or replaced unfailed: 90 % of diaphragms are expected to last at least \d+ SIP cycles \(likely between \d+ and \d+\)\./
		);
		const [t = Number.NaN, lower = Number.NaN, upper = Number.NaN] = figures(text).slice(3);
		// Two significant figures with 10 failures; the range is rounded outwards.
		for (const x of [t, lower, upper])
			expect(String(x).replace(/0+$/, '').length).toBeLessThanOrEqual(2);
		expect(Math.abs(t / life.life - 1)).toBeLessThan(0.05);
		expect(lower).toBeLessThanOrEqual(life.lower);
		expect(upper).toBeGreaterThanOrEqual(life.upper);
	});
	it('wording depends on the number of failures', () => {
		expect(text).toMatch(/range is wide/);
		const few = value(fitWeibull([...failed([40, 90, 150]), ...inService([200, 200])]));
		expect(describeFit(few, 0.9, 'days')).toMatch(/only 3 failures.*very uncertain/);
		const many = value(fitWeibull(failed(sample(2, 100, 20))));
		const manyText = describeFit(many, 0.9, 'days');
		expect(manyText).toMatch(/none still in service/);
		expect(manyText).toMatch(/range is fair/);
		expect(manyText).not.toMatch(/very uncertain|range is wide/);
	});
	it('warns when the life lies beyond the longest recorded one, and speaks of wear-out only when the data show it', () => {
		expect(describeFit(fit, 0.1, 'hours')).toMatch(/extrapolation/);
		expect(text).not.toMatch(/extrapolation/);
		// NIST example: the 95 % bounds of β (about 0.97–3.05) include 1.
		expect(text).toMatch(/cannot yet show whether failures become more likely with age/);
		const wearOut = value(fitWeibull(failed(sample(3, 100, 40))));
		expect(describeFit(wearOut, 0.9, 'days')).toMatch(/more likely with age, so replacing/);
		const early = value(fitWeibull(failed(sample(0.5, 100, 40))));
		expect(describeFit(early, 0.9, 'days')).toMatch(/early in life/);
	});
	it('never shows NaN or Infinity', () => {
		for (const r of [0.5, 0.9, 0.99, 0.999])
			expect(describeFit(fit, r, 'hours')).not.toMatch(/NaN|Infinity/);
		expect(describeFit(fit, 0.999, 'hours')).toMatch(/99\.9 %/);
	});
});
