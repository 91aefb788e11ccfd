import { ok, refuse, type Calc } from './result';

/**
 * Weibull reliability fit (9/10 item 6): how long a part lasts, from the lives recorded when it
 * was replaced, so a planner can choose a preventive-maintenance interval at a chosen
 * reliability. Two-parameter Weibull, R(t) = exp(−(t/η)^β), fitted by maximum likelihood with
 * right-censoring: a part still in service (or removed unfailed) is `failed: false` and counts
 * with its survival only. Times are unit-agnostic (SIP cycles, days, hours…), all in one unit.
 *
 * The method is the textbook one (NIST/SEMATECH e-Handbook of Statistical Methods §8.4.1.3,
 * whose worked example checks it in weibull.spec.ts): β solves the profile-likelihood equation
 *   Σ tᵢ^β ln tᵢ / Σ tᵢ^β − 1/β − (1/r) Σ_failures ln tᵢ = 0,
 * which rises monotonically in β (so its root is unique), and η = (Σ tᵢ^β / r)^(1/β).
 */
export type Observation = { time: number; failed: boolean };
export type Bounds = { lower: number; upper: number };

export type WeibullFit = {
	/** Shape β: below 1 early failures, about 1 random failures, above 1 wear-out. */
	beta: number;
	/** Scale η: the life by which 63.2 % have failed, in the unit of the times. */
	eta: number;
	/** Failures. */
	r: number;
	/** Observations: failures and units still in service. */
	n: number;
	/** Natural log; density for each failure, survival for each unit still in service. */
	logLikelihood: number;
	/** η·Γ(1 + 1/β). */
	meanLife: number;
	/** Standard errors from the observed Fisher information (delta method from the log scale). */
	seBeta: number;
	seEta: number;
	/** Approximate 95 % bounds, symmetric on the log scale (so they stay positive). */
	betaBounds: Bounds;
	etaBounds: Bounds;
	/** Covariance of (ln β, ln η): the inverse of the observed information in those parameters. */
	covLog: { lnBeta: number; lnEta: number; cross: number };
	/** The longest time observed (failed or not): beyond it a life is an extrapolation. */
	longest: number;
};

/** Two-sided 95 % point of the standard normal distribution. */
export const Z95 = 1.959964;

const BETA_MIN = 1e-3;
const BETA_MAX = 1e4;
const TOLERANCE = 1e-12;

// Lanczos approximation, g = 7, nine coefficients (written from memory; the checks of Γ(1/2),
// Γ(3/2) and Γ(5) in weibull.spec.ts confirm them).
const LANCZOS_G = 7;
const LANCZOS = [
	0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313,
	-176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6,
	1.5056327351493116e-7
] as const;

/** ln Γ(x) for x > 0 (Lanczos, with the reflection formula below 1/2); NaN outside. */
export function logGamma(x: number): number {
	if (!(x > 0) || !Number.isFinite(x)) return Number.NaN;
	if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
	const y = x - 1;
	const a = LANCZOS.reduce((sum, c, i) => (i === 0 ? c : sum + c / (y + i)), 0);
	const t = y + LANCZOS_G + 0.5;
	return 0.5 * Math.log(2 * Math.PI) + (y + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Γ(x) for x > 0. */
export function gamma(x: number): number {
	return Math.exp(logGamma(x));
}

const allFinite = (value: unknown): boolean =>
	typeof value === 'number'
		? Number.isFinite(value)
		: typeof value === 'object' && value !== null
			? Object.values(value).every(allFinite)
			: true;

/** The observations checked, or the message naming the first bad one. */
function check(observations: readonly Observation[]): Calc<Observation[]> {
	if (!Array.isArray(observations) || observations.length === 0)
		return refuse('Enter at least two recorded failures: there are no observations.');
	for (const [i, o] of observations.entries()) {
		const time = (o as Partial<Observation> | null)?.time;
		if (typeof time !== 'number' || !Number.isFinite(time) || time <= 0)
			return refuse(
				`Observation ${i + 1}: the time must be a number above zero (the life in cycles, days or hours).`
			);
		if (typeof o.failed !== 'boolean')
			return refuse(`Observation ${i + 1}: say whether the part failed or is still in service.`);
	}
	return ok([...observations]);
}

/**
 * The log-likelihood of (β, η) for the observations: Σ_failures ln f(tᵢ) + Σ_in service ln R(tᵢ).
 * Exported so the checks can differentiate it numerically.
 */
export function weibullLogLikelihood(
	observations: readonly Observation[],
	beta: number,
	eta: number
): Calc<number> {
	const c = check(observations);
	if (!c.ok) return c;
	if (!(beta > 0) || !(eta > 0) || !Number.isFinite(beta) || !Number.isFinite(eta))
		return refuse('The shape and the scale must be numbers above zero.');
	let sum = 0;
	for (const { time, failed } of c.value) {
		const w = beta * Math.log(time / eta); // ln (t/η)^β
		sum -= Math.exp(w);
		if (failed) sum += Math.log(beta) - Math.log(time) + w;
	}
	return Number.isFinite(sum) ? ok(sum) : refuse('The log-likelihood is out of range.');
}

export function fitWeibull(observations: readonly Observation[]): Calc<WeibullFit> {
	const c = check(observations);
	if (!c.ok) return c;
	const obs = c.value;
	const n = obs.length;
	const failures = obs.filter((o) => o.failed).map((o) => o.time);
	const r = failures.length;
	if (r < 2)
		return refuse(
			`A fit needs at least two failures; ${r === 0 ? 'none is' : 'only one is'} recorded.`
		);
	if (failures.every((t) => t === failures[0]))
		return refuse(
			'All the failures are at the same time, so the spread of lives cannot be estimated: a fit needs failures at different times.'
		);

	// Logs relative to the longest time, so every weight exp(β·y) lies in (0, 1] and the sums
	// neither overflow nor lose the longest time (weight 1) at a large β.
	const longest = Math.max(...obs.map((o) => o.time));
	const lnLongest = Math.log(longest);
	const y = obs.map((o) => Math.log(o.time) - lnLongest);
	const meanFailureY = failures.reduce((s, t) => s + Math.log(t) - lnLongest, 0) / r;

	// g(x) with x = ln β, and its derivative dg/dx = β·(weighted variance of ln t) + 1/β > 0.
	const profile = (x: number) => {
		const beta = Math.exp(x);
		let s0 = 0;
		let s1 = 0;
		for (const yi of y) {
			const w = Math.exp(beta * yi);
			s0 += w;
			s1 += w * yi;
		}
		const m = s1 / s0;
		let v = 0;
		for (const yi of y) v += Math.exp(beta * yi) * (yi - m) ** 2;
		v /= s0;
		return { g: m - 1 / beta - meanFailureY, dg: beta * v + 1 / beta, s0 };
	};

	// Bracket the root on ln β, stepping out from β = 1 (g rises with β).
	const xMin = Math.log(BETA_MIN);
	const xMax = Math.log(BETA_MAX);
	let lo = 0;
	let hi = 0;
	const g0 = profile(0).g;
	if (!Number.isFinite(g0)) return refuse('The fit did not converge: check the times entered.');
	if (g0 < 0) {
		for (let step = 1; ; step *= 2) {
			hi = Math.min(lo + step, xMax);
			if (profile(hi).g >= 0) break;
			if (hi === xMax) return outOfRange();
			lo = hi;
		}
	} else {
		for (let step = 1; ; step *= 2) {
			lo = Math.max(hi - step, xMin);
			if (profile(lo).g <= 0) break;
			if (lo === xMin) return outOfRange();
			hi = lo;
		}
	}

	// Newton–Raphson on ln β, kept inside the bracket; a step that leaves it is a bisection.
	let x = (lo + hi) / 2;
	let converged = false;
	for (let iteration = 0; iteration < 200; iteration++) {
		const { g, dg } = profile(x);
		if (!Number.isFinite(g) || !Number.isFinite(dg)) break;
		if (g === 0) {
			converged = true;
			break;
		}
		if (g < 0) lo = x;
		else hi = x;
		let next = x - g / dg;
		if (!(next > lo && next < hi)) next = (lo + hi) / 2;
		const done = Math.abs(next - x) <= TOLERANCE || hi - lo <= TOLERANCE;
		x = next;
		if (done) {
			converged = true;
			break;
		}
	}
	if (!converged) return refuse('The fit did not converge: check the times entered.');

	const beta = Math.exp(x);
	const lnEta = lnLongest + (Math.log(profile(x).s0) - Math.log(r)) / beta;
	const eta = Math.exp(lnEta);

	// Observed information in (a, b) = (ln β, ln η), with z = (t/η)^β and w = ln z:
	//   I_aa = Σ z w² + Σ z w − Σ_failures w,  I_ab = −β(Σ z − r) − β Σ z w,  I_bb = β² Σ z.
	// (At the maximum Σ z = r and Σ z w = r + Σ_failures w, so I_aa = r + Σ z w², I_bb = β² r.)
	let sz = 0;
	let szw = 0;
	let szww = 0;
	let sfw = 0;
	let logLikelihood = 0;
	for (const { time, failed } of obs) {
		const w = beta * (Math.log(time) - lnEta);
		const z = Math.exp(w);
		sz += z;
		szw += z * w;
		szww += z * w * w;
		logLikelihood -= z;
		if (failed) {
			sfw += w;
			logLikelihood += Math.log(beta) - Math.log(time) + w;
		}
	}
	const iaa = szww + szw - sfw;
	const iab = -beta * (sz - r) - beta * szw;
	const ibb = beta * beta * sz;
	const det = iaa * ibb - iab * iab;
	if (!(det > 0) || !(iaa > 0))
		return refuse('The fit did not reach a clear maximum: check the times entered.');
	const covLog = { lnBeta: ibb / det, lnEta: iaa / det, cross: -iab / det };
	const seLnBeta = Math.sqrt(covLog.lnBeta);
	const seLnEta = Math.sqrt(covLog.lnEta);

	const fit: WeibullFit = {
		beta,
		eta,
		r,
		n,
		logLikelihood,
		meanLife: Math.exp(lnEta + logGamma(1 + 1 / beta)),
		seBeta: beta * seLnBeta,
		seEta: eta * seLnEta,
		betaBounds: { lower: beta * Math.exp(-Z95 * seLnBeta), upper: beta * Math.exp(Z95 * seLnBeta) },
		etaBounds: { lower: eta * Math.exp(-Z95 * seLnEta), upper: eta * Math.exp(Z95 * seLnEta) },
		covLog,
		longest
	};
	return allFinite(fit)
		? ok(fit)
		: refuse('The fit gives results too extreme to use: check the times entered.');
}

function outOfRange<T>(): Calc<T> {
	return refuse(
		`The fit did not converge: the shape (β) would lie outside ${BETA_MIN}–${BETA_MAX}, so the failure times are too close together or too spread out to give a usable fit.`
	);
}

/** R(t) = exp(−(t/η)^β): the share expected to last beyond t. */
export function reliabilityAt(fit: WeibullFit, t: number): Calc<number> {
	if (!Number.isFinite(t) || t < 0) return refuse('Enter the time as a number, zero or above.');
	return ok(Math.exp(-((t / fit.eta) ** fit.beta)));
}

export type Life = { life: number; lower: number; upper: number };

/**
 * The life by which a share 1 − R has failed, η·(−ln R)^(1/β): the suggested PM interval at
 * reliability R (R = 0.9 is the B10 life). Approximate 95 % bounds by the delta method on
 * ln t = ln η + ln(−ln R)/β, with the covariance of (ln β, ln η):
 *   Var(ln t) = Var(ln η) + (c/β)² Var(ln β) − 2 (c/β) Cov(ln β, ln η),  c = ln(−ln R).
 */
export function lifeAtReliability(fit: WeibullFit, reliability: number): Calc<Life> {
	if (!Number.isFinite(reliability) || reliability <= 0 || reliability >= 1)
		return refuse('Choose a reliability above 0 and below 1 (for example 0.9 for 90 %).');
	const c = Math.log(-Math.log(reliability));
	const lnLife = Math.log(fit.eta) + c / fit.beta;
	const k = c / fit.beta;
	const variance = fit.covLog.lnEta + k * k * fit.covLog.lnBeta - 2 * k * fit.covLog.cross;
	const se = Math.sqrt(Math.max(variance, 0));
	const life = {
		life: Math.exp(lnLife),
		lower: Math.exp(lnLife - Z95 * se),
		upper: Math.exp(lnLife + Z95 * se)
	};
	return allFinite(life) && life.lower > 0
		? ok(life)
		: refuse('That reliability lies too far beyond the recorded lives to give a usable interval.');
}

/** Rounds a positive number to `digits` significant figures, down, up or to the nearest. */
function roundTo(x: number, digits: number, mode: 'floor' | 'ceil' | 'round'): number {
	if (!(x > 0)) return 0;
	const step = 10 ** (Math.floor(Math.log10(Math.abs(x))) - digits + 1);
	// A hair of slack so that float noise (17.9999999999) does not cost a whole step.
	const nudge = mode === 'floor' ? 1e-9 : mode === 'ceil' ? -1e-9 : 0;
	const k = Math[mode](x / step + nudge);
	return Number((k * step).toPrecision(Math.max(digits, 1) + 1));
}

const percent = (reliability: number) => String(Number((reliability * 100).toFixed(2)));

/**
 * The interval and its uncertainty in words for a maintenance planner. `part` is the plural
 * noun for the items (e.g. "diaphragms"). A reliability outside (0, 1) gives the message instead.
 * Figures are rounded to two significant figures (three from 15 failures on); the lower bound is
 * rounded down and the upper bound up, so the range shown is never narrower than computed.
 */
export function describeFit(
	fit: WeibullFit,
	reliability: number,
	unit: string,
	part = 'parts'
): string {
	const life = lifeAtReliability(fit, reliability);
	if (!life.ok) return life.message;
	const digits = fit.r >= 15 ? 3 : 2;
	const { life: t, lower, upper } = life.value;
	const inService = fit.n - fit.r;
	const from =
		inService === 0
			? `From ${fit.r} recorded failures, with none still in service or replaced unfailed`
			: `From ${fit.r} recorded failures and ${inService} still in service or replaced unfailed`;
	const sentences = [
		`${from}: ${percent(reliability)} % of ${part} are expected to last at least ` +
			`${roundTo(t, digits, 'round')} ${unit} (likely between ${roundTo(lower, digits, 'floor')} ` +
			`and ${roundTo(upper, digits, 'ceil')}).`
	];
	if (fit.r < 5)
		sentences.push(
			`With only ${fit.r} failures this is very uncertain; use it as a rough guide only, keep to the current interval unless there is other evidence, and review it as more replacements are recorded.`
		);
	else if (fit.r < 15)
		sentences.push(
			'With so few failures the range is wide; treat the interval as a starting point and review it as more replacements are recorded.'
		);
	else
		sentences.push(
			'The range is fair for maintenance records; review the interval as more replacements are recorded or when the service conditions change.'
		);
	if (t > fit.longest)
		sentences.push(
			`This is longer than any life recorded so far (${roundTo(fit.longest, 3, 'round')} ${unit}), so it is an extrapolation.`
		);
	if (fit.betaBounds.lower > 1)
		sentences.push(
			'Failures become more likely with age, so replacing at a fixed interval is worthwhile.'
		);
	else if (fit.betaBounds.upper < 1)
		sentences.push(
			'Failures are most likely early in life, so replacing sooner would not prevent them; look at fitting and first use instead.'
		);
	else
		sentences.push(
			'The records cannot yet show whether failures become more likely with age; a fixed replacement interval may not prevent them.'
		);
	return sentences.join(' ');
}
