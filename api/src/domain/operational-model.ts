// Operational model of agonism (Black & Leff 1983; slope factor n from Black, Leff, Shankley &
// Wood 1985), the transduction coefficient log(τ/KA) and the bias factor ΔΔlog(τ/KA)
// (Kenakin, Watson, Muniz-Medina, Christopoulos & Novick 2012). Sources and check values:
// shared/REFERENCES.md §4.
//
//   E = Em·τⁿ[A]ⁿ / (([A] + KA)ⁿ + τⁿ[A]ⁿ)  =  Em / (1 + ((1 + KA/[A]) / τ)ⁿ)
//
// Responses are over basal (basal = 0, as normalised per run in pharmacology.ts); a point at
// [A] = 0 is a basal point and the model gives 0 there. Em is the system maximum, shared by every
// agonist in the system and held fixed (taken from the reference full agonist, common practice);
// n is held at 1 unless `fitSlope` is set.
//
// Fitting: ordinary least squares through `leastSquares` (least-squares.ts) over log τ and log KA
// (and n), from several starts, the lowest RSS kept. Box (common practice, not a published
// standard): log τ in [−3, 4], log KA within 3 log units below and 5 above the tested range
// (a very efficacious agonist has KA far above its EC50 = KA/(1+τ)), n in [0.2, 5].
// Standard errors from the covariance s²(JᵀJ)⁻¹; 95 % CI = value ± t(dof)·se (`tCritical95`).
//
// Flags:
// - too-few-points: fewer points than free parameters + 1, or fewer distinct concentrations above
//   zero than free parameters + 1. No fit.
// - no-response: the model does not explain significantly more than basal (extra-sum-of-squares
//   F-test against E = 0, p > 0.05). No parameters are reported.
// - tau-undetermined: the data cannot exclude τ → ∞, i.e. the compound behaves as a full agonist
//   in this system and only the ratio τ/KA is identifiable (as τ → ∞ the model tends to
//   Em/(1 + (KA/(τ[A]))ⁿ), which depends on τ/KA alone). Decided by the profile of the RSS over
//   log τ: the likelihood-ratio
//   (F) criterion RSS(log τ) ≤ RSSmin·(1 + t²(dof)/dof), with KA (and n) re-fitted at each
//   fixed log τ (the profile interval of Bates & Watts 1988 — from memory). When that criterion
//   still holds at the upper edge of the box, log τ is reported as '>' the lowest log τ that
//   satisfies it (the profile's lower 95 % limit), log KA as '>' the corresponding bound, and
//   log(τ/KA) from a fit of the τ → ∞ limit E = Em/(1 + (K/[A])ⁿ), where log(τ/KA) = −log K.
// - ka-undetermined: log KA has no standard error or its 95 % CI is wider than 2 log units
//   (the width curve-fit.ts calls ambiguous).
// - not-converged: the least-squares convergence test failed.

import { AMBIGUOUS_CI_WIDTH, FLAT_ALPHA, regularizedBeta, tCritical95, type Estimate } from './curve-fit.js';
import { leastSquares, residualSumOfSquares } from './least-squares.js';

export interface ConcentrationResponsePoint {
  /** Molar agonist concentration; 0 for a basal point. */
  concentrationM: number;
  /** Response over basal, in the units of `em`. */
  response: number;
  excluded?: boolean;
}

export interface OperationalFitOptions {
  /** System maximum Em (response over basal), held fixed; from the reference full agonist. */
  em: number;
  /** Transducer slope n; held at this value (default 1) unless `fitSlope`. */
  n?: number;
  /** Fit n too (it then starts from `n`). */
  fitSlope?: boolean;
}

export type OperationalFlag = 'too-few-points' | 'no-response' | 'tau-undetermined' | 'ka-undetermined' | 'not-converged';

/** An estimate that may be censored: '>' means the value is a lower bound (se and ci95 null). */
export interface QualifiedEstimate extends Estimate {
  qualifier: '=' | '<' | '>';
}

/** A derived quantity with its uncertainty. */
export interface DerivedEstimate {
  value: number;
  se: number | null;
  ci95: [number, number] | null;
}

export interface OperationalFit {
  /** False for too-few-points and no-response. */
  ok: boolean;
  /** Points used (including basal points). */
  n: number;
  dof: number;
  rss: number;
  iterations: number;
  converged: boolean;
  em: number;
  params: { logTau: QualifiedEstimate; logKA: QualifiedEstimate; slope: Estimate };
  /** Transduction coefficient log10(τ/KA), KA in mol/L (Kenakin et al. 2012). */
  logTauOverKA: DerivedEstimate;
  /** Emax = Em·τⁿ/(1 + τⁿ) (Em when τ is undetermined). */
  emax: number;
  /** log EC50 = log(KA / ((2 + τⁿ)^(1/n) − 1)) (log K of the τ → ∞ limit when τ is undetermined). */
  logEC50: number;
  /** Covariance of [log τ, log KA] (and n when fitted); null when not available. */
  covariance: number[][] | null;
  /** Min and max log concentration of the points above zero. */
  testedRange: [number, number];
  flags: OperationalFlag[];
  /** One plain sentence per flag. */
  messages: string[];
}

/** Box and profile constants (common practice, not a published standard). */
export const LOG_TAU_MIN = -3;
export const LOG_TAU_MAX = 4;
const KA_BELOW_RANGE = 3;
const KA_ABOVE_RANGE = 5;
const SLOPE_MIN = 0.2;
const SLOPE_MAX = 5;

/** log10(1 + 10^d) without overflow or loss of precision. */
function log10OnePlusPow10(d: number): number {
  return d > 0 ? d + Math.log1p(Math.pow(10, -d)) / Math.LN10 : Math.log1p(Math.pow(10, d)) / Math.LN10;
}

/**
 * Operational-model response at log concentration x (−Infinity for [A] = 0), in the numerically
 * stable form E = Em / (1 + 10^(n·(log10(1 + KA/[A]) − log τ))). Equals `operationalModel` in
 * pharmacology.ts.
 */
export function operationalResponse(x: number, p: { em: number; logTau: number; logKA: number; n?: number }): number {
  const n = p.n ?? 1;
  return p.em / (1 + Math.pow(10, n * (log10OnePlusPow10(p.logKA - x) - p.logTau)));
}

/** Emax = Em·τⁿ/(1 + τⁿ) (Black & Leff 1983; REFERENCES.md §4). */
export function operationalEmax(em: number, tau: number, n = 1): number {
  const t = Math.pow(tau, n);
  return (em * t) / (1 + t);
}

/** EC50 = KA / ((2 + τⁿ)^(1/n) − 1), which is KA/(1 + τ) for n = 1 (REFERENCES.md §4). */
export function operationalEc50(kaM: number, tau: number, n = 1): number {
  return kaM / (Math.pow(2 + Math.pow(tau, n), 1 / n) - 1);
}

/** Transduction coefficient log10(τ/KA), KA in mol/L (Kenakin et al. 2012). */
export function transductionCoefficient(tau: number, kaM: number): number {
  if (!(tau > 0) || !(kaM > 0)) throw new RangeError('the transduction coefficient needs τ > 0 and KA > 0');
  return Math.log10(tau / kaM);
}

type Name = 'logTau' | 'logKA' | 'n';

/**
 * Fits log τ and log KA of the operational model (Em fixed; n fixed, default 1, or fitted) to one
 * agonist's concentration–response points. See the file header for the flags and the treatment of
 * full agonists (τ not identifiable).
 */
export function fitOperationalModel(points: readonly ConcentrationResponsePoint[], opts: OperationalFitOptions): OperationalFit {
  const em = opts.em;
  if (!(em > 0) || !Number.isFinite(em)) throw new RangeError('the operational model needs a positive, finite system maximum Em');
  const nStart = opts.n ?? 1;
  if (!(nStart > 0)) throw new RangeError('the transducer slope n must be positive');
  const used = points.filter((p) => !p.excluded && p.concentrationM >= 0 && Number.isFinite(p.concentrationM) && Number.isFinite(p.response));
  const x = used.map((p) => (p.concentrationM > 0 ? Math.log10(p.concentrationM) : -Infinity));
  const y = used.map((p) => p.response);
  const nPts = used.length;
  const positive = x.filter(Number.isFinite);
  const testedRange: [number, number] = positive.length ? [Math.min(...positive), Math.max(...positive)] : [NaN, NaN];
  const free: Name[] = opts.fitSlope ? ['logTau', 'logKA', 'n'] : ['logTau', 'logKA'];
  const distinct = new Set(positive).size;

  const nan = (fixed = false): QualifiedEstimate => ({ value: NaN, se: null, ci95: null, fixed, qualifier: '=' });
  const slopeFixed: Estimate = { value: nStart, se: null, ci95: null, fixed: true };
  const empty = (flag: OperationalFlag, message: string, extra: Partial<OperationalFit> = {}): OperationalFit => ({
    ok: false,
    n: nPts,
    dof: nPts - free.length,
    rss: NaN,
    iterations: 0,
    converged: false,
    em,
    params: { logTau: nan(), logKA: nan(), slope: opts.fitSlope ? nan() : slopeFixed },
    logTauOverKA: { value: NaN, se: null, ci95: null },
    emax: NaN,
    logEC50: NaN,
    covariance: null,
    testedRange,
    flags: [flag],
    messages: [message],
    ...extra,
  });

  if (nPts < free.length + 1 || distinct < free.length + 1) {
    return empty('too-few-points', `Only ${nPts} point${nPts === 1 ? '' : 's'} at ${distinct} concentration${distinct === 1 ? '' : 's'} above zero are included; the operational model with ${free.length} free parameters needs at least ${free.length + 1} points at ${free.length + 1} or more concentrations.`);
  }

  const [xmin, xmax] = testedRange;
  const box: Record<Name, [number, number]> = {
    logTau: [LOG_TAU_MIN, LOG_TAU_MAX],
    logKA: [xmin - KA_BELOW_RANGE, xmax + KA_ABOVE_RANGE],
    n: [SLOPE_MIN, SLOPE_MAX],
  };
  // Internal parameters u = 1 + (v − lo)/(hi − lo) ∈ [1, 2], so the relative finite-difference
  // steps of leastSquares suit every parameter (log τ may end near 0).
  const toU = (name: Name, v: number) => 1 + (v - box[name][0]) / (box[name][1] - box[name][0]);
  const fromU = (name: Name, u: number) => box[name][0] + (u - 1) * (box[name][1] - box[name][0]);
  const factor = (name: Name) => box[name][1] - box[name][0];
  const clampTo = (name: Name, v: number) => Math.min(Math.max(v, box[name][0]), box[name][1]);

  /** Fits the named free parameters with the others held at `held`; returns named values. */
  const fitWith = (names: Name[], held: Partial<Record<Name, number>>, starts: Record<Name, number>[]) => {
    const expand = (q: number[]) => {
      const v = { logTau: held.logTau ?? NaN, logKA: held.logKA ?? NaN, n: held.n ?? nStart } as Record<Name, number>;
      names.forEach((name, k) => (v[name] = fromU(name, q[k])));
      return v;
    };
    const model = (q: number[]) => {
      const v = expand(q);
      return (xi: number) => operationalResponse(xi, { em, logTau: v.logTau, logKA: v.logKA, n: v.n });
    };
    const lower = names.map(() => 1);
    const upper = names.map(() => 2);
    let best: ReturnType<typeof leastSquares> | null = null;
    let iterations = 0;
    for (const s of starts) {
      const q = names.map((name) => toU(name, clampTo(name, s[name])));
      const r = leastSquares(model, x, y, q, { lower, upper, maxIterations: 10 });
      iterations += r.iterations;
      if (!best || r.rss < best.rss) best = r;
    }
    return { fit: best!, values: expand(best!.params), iterations, model };
  };

  // Starting values: the observed maximum as a fraction f of Em gives τ (f = τⁿ/(1+τⁿ)); log EC50
  // by interpolation at half that maximum; log KA from EC50 = KA/((2+τⁿ)^(1/n) − 1).
  const { ymax, logHalf } = startingShape(x, y);
  const f = Math.min(Math.max(ymax / em, 0.02), 0.98);
  const tau0 = Math.pow(f / (1 - f), 1 / nStart);
  const kaFor = (logTau: number, logEC50: number, n = nStart) => logEC50 + Math.log10(Math.pow(2 + Math.pow(10, n * logTau), 1 / n) - 1);
  const starts: Record<Name, number>[] = [Math.log10(tau0), Math.log10(tau0) + 1, Math.log10(tau0) - 0.5, 2].map((logTau) => ({ logTau, logKA: kaFor(logTau, logHalf), n: nStart }));

  const main = fitWith(free, {}, starts);
  let iterations = main.iterations;
  const fit = main.fit;
  const v = main.values;
  const dof = fit.dof;
  const rss = residualSumOfSquares(main.model, fit.params, x, y);

  // No response: extra-sum-of-squares F-test of the model against E = 0 (no parameters).
  const ss0 = y.reduce((s, t) => s + t * t, 0);
  const pNoResponse = fTestP(ss0, rss, free.length, dof);
  if (pNoResponse > FLAT_ALPHA) {
    return empty('no-response', `The responses do not rise significantly above basal (F-test against no response, p = ${pNoResponse.toFixed(2)}), so no operational parameters are reported.`, { dof, rss, iterations, converged: fit.converged });
  }

  const flags: OperationalFlag[] = [];
  const messages: string[] = [];
  const flag = (fl: OperationalFlag, message: string) => {
    flags.push(fl);
    messages.push(message);
  };
  if (!fit.converged) flag('not-converged', 'The operational-model fit did not converge, so the parameters may not be the best fit.');

  const t = tCritical95(dof);
  // Profile of the RSS over log τ, the other free parameters re-fitted (see header).
  const others = free.filter((name) => name !== 'logTau');
  const logEC50Fit = Math.log10(operationalEc50(10 ** v.logKA, 10 ** v.logTau, v.n));
  const profile = (logTau: number) => {
    const r = fitWith(others, { logTau }, [{ logTau, logKA: kaFor(logTau, logEC50Fit, v.n), n: v.n }]);
    iterations += r.iterations;
    return r.fit.rss;
  };
  const threshold = rss * (1 + (t * t) / dof);
  const tauUndetermined = v.logTau >= LOG_TAU_MAX - 1e-9 || profile(LOG_TAU_MAX) <= threshold;

  const covariance = fit.covariance ? fit.covariance.map((row, i) => row.map((c, j) => c * factor(free[i]) * factor(free[j]))) : null;
  const se = free.map((name, k) => (fit.se[k] === null ? null : fit.se[k]! * factor(name)));
  const wald = (value: number, s: number | null): [number, number] | null => (s !== null ? [value - t * s, value + t * s] : null);
  const est = (k: number): QualifiedEstimate => ({ value: v[free[k]], se: se[k], ci95: wald(v[free[k]], se[k]), fixed: false, qualifier: '=' });
  const slope: Estimate = opts.fitSlope ? est(2) : slopeFixed;

  if (tauUndetermined) {
    // Lowest log τ the profile criterion accepts, by bisection (the RSS falls as τ rises here).
    let lo = LOG_TAU_MIN;
    let hi = Math.min(v.logTau, LOG_TAU_MAX);
    let bound = lo;
    if (profile(lo) > threshold) {
      for (let i = 0; i < 40 && hi - lo > 1e-6; i++) {
        const mid = (lo + hi) / 2;
        if (profile(mid) <= threshold) hi = mid;
        else lo = mid;
      }
      bound = hi;
    }
    // The τ → ∞ limit: E = Em/(1 + (K/[A])ⁿ) = Em/(1 + 10^(n·(log K − x))); log(τ/KA) = −log K.
    const limit = fitLimit(x, y, em, opts.fitSlope ? v.n : nStart, !!opts.fitSlope, logEC50Fit, [xmin - KA_BELOW_RANGE, xmax + KA_ABOVE_RANGE]);
    iterations += limit.iterations;
    const logK = limit.logK;
    const kSe = limit.se;
    const tl = tCritical95(limit.dof);
    flag('tau-undetermined', `The compound reaches the system maximum (a full agonist here): the data cannot exclude τ → ∞, so log τ is reported as > ${bound.toFixed(2)} (lower 95 % profile limit) and only log(τ/KA) = ${(-logK).toFixed(2)} is determined.`);
    return {
      ok: true,
      n: nPts,
      dof,
      rss,
      iterations,
      converged: fit.converged,
      em,
      params: {
        logTau: { value: bound, se: null, ci95: null, fixed: false, qualifier: '>' },
        logKA: { value: logK + bound, se: null, ci95: null, fixed: false, qualifier: '>' },
        slope: opts.fitSlope ? { value: limit.n, se: limit.nSe, ci95: limit.nSe !== null ? [limit.n - tl * limit.nSe, limit.n + tl * limit.nSe] : null, fixed: false } : slopeFixed,
      },
      logTauOverKA: { value: -logK, se: kSe, ci95: kSe !== null ? [-logK - tl * kSe, -logK + tl * kSe] : null },
      emax: em,
      logEC50: logK,
      covariance: null,
      testedRange,
      flags,
      messages,
    };
  }

  const logTau = est(0);
  const logKA = est(1);
  // var(log τ − log KA) = var(log τ) + var(log KA) − 2 cov(log τ, log KA)
  // (= var(a) + var(b) + 2 cov(a, b) with a = log τ, b = −log KA).
  const varR = covariance ? covariance[0][0] + covariance[1][1] - 2 * covariance[0][1] : null;
  const rSe = varR !== null && varR >= 0 ? Math.sqrt(varR) : null;
  const r = v.logTau - v.logKA;
  if (logKA.se === null || (logKA.ci95 && logKA.ci95[1] - logKA.ci95[0] > AMBIGUOUS_CI_WIDTH)) {
    flag('ka-undetermined', logKA.se === null ? 'log KA cannot be pinned down by these data (no standard error could be computed).' : `log KA is poorly determined: its 95 % confidence interval spans ${(logKA.ci95![1] - logKA.ci95![0]).toFixed(1)} log units.`);
  }
  return {
    ok: true,
    n: nPts,
    dof,
    rss,
    iterations,
    converged: fit.converged,
    em,
    params: { logTau, logKA, slope },
    logTauOverKA: { value: r, se: rSe, ci95: wald(r, rSe) },
    emax: operationalEmax(em, 10 ** v.logTau, v.n),
    logEC50: Math.log10(operationalEc50(10 ** v.logKA, 10 ** v.logTau, v.n)),
    covariance,
    testedRange,
    flags,
    messages,
  };
}

/** Largest per-concentration mean response, and the log concentration where the means cross half of it. */
function startingShape(x: number[], y: number[]): { ymax: number; logHalf: number } {
  const groups = new Map<number, number[]>();
  x.forEach((xi, i) => {
    if (Number.isFinite(xi)) groups.set(xi, [...(groups.get(xi) ?? []), y[i]]);
  });
  const xs = [...groups.keys()].sort((a, b) => a - b);
  const means = xs.map((xi) => groups.get(xi)!.reduce((s, v) => s + v, 0) / groups.get(xi)!.length);
  const ymax = Math.max(...means);
  const half = ymax / 2;
  let logHalf = (xs[0] + xs[xs.length - 1]) / 2;
  for (let i = 0; i + 1 < xs.length; i++) {
    const a = means[i] - half;
    const b = means[i + 1] - half;
    if (a <= 0 && b > 0) {
      logHalf = xs[i] + (xs[i + 1] - xs[i]) * (a / (a - b));
      break;
    }
  }
  return { ymax, logHalf };
}

/** The τ → ∞ limit of the operational model: E = Em/(1 + 10^(n·(log K − x))), log K (and n) fitted. */
function fitLimit(x: number[], y: number[], em: number, n0: number, fitSlope: boolean, logK0: number, range: [number, number]) {
  const [lo, hi] = range;
  const span = hi - lo;
  const model = (q: number[]) => {
    const logK = lo + (q[0] - 1) * span;
    const n = fitSlope ? SLOPE_MIN + (q[1] - 1) * (SLOPE_MAX - SLOPE_MIN) : n0;
    return (xi: number) => em / (1 + Math.pow(10, n * (logK - xi)));
  };
  const start = [1 + (Math.min(Math.max(logK0, lo), hi) - lo) / span];
  if (fitSlope) start.push(1 + (n0 - SLOPE_MIN) / (SLOPE_MAX - SLOPE_MIN));
  const r = leastSquares(model, x, y, start, { lower: start.map(() => 1), upper: start.map(() => 2), maxIterations: 10 });
  return {
    logK: lo + (r.params[0] - 1) * span,
    se: r.se[0] === null ? null : r.se[0] * span,
    n: fitSlope ? SLOPE_MIN + (r.params[1] - 1) * (SLOPE_MAX - SLOPE_MIN) : n0,
    nSe: fitSlope && r.se[1] !== null ? r.se[1]! * (SLOPE_MAX - SLOPE_MIN) : null,
    dof: r.dof,
    iterations: r.iterations,
  };
}

/** p of the extra-sum-of-squares F-test of a model with `p` parameters against a model with none. */
function fTestP(ss0: number, rss: number, p: number, dof: number): number {
  if (!(ss0 > 0) || rss >= ss0) return 1;
  if (rss <= 0) return 0;
  const f = (ss0 - rss) / p / (rss / dof);
  return regularizedBeta(dof / (dof + p * f), dof / 2, p / 2);
}

// ---------------------------------------------------------------------------------------------
// Bias (Kenakin et al. 2012)

/** One log(τ/KA) with its standard error and, when known, the degrees of freedom behind it. */
export interface TransductionValue {
  value: number;
  se: number | null;
  dof?: number | null;
}

export interface BiasResult {
  /** Δlog(τ/KA) = test − reference on pathway 1. */
  deltaPathway1: DerivedEstimate;
  deltaPathway2: DerivedEstimate;
  /** ΔΔlog(τ/KA) = Δ(pathway 1) − Δ(pathway 2); positive = biased toward pathway 1. */
  deltaDelta: DerivedEstimate & { dof: number | null };
  /** 10^ΔΔ with the CI transformed likewise. */
  biasFactor: { value: number; ci95: [number, number] | null };
}

/**
 * ΔΔlog(τ/KA) of a test agonist relative to a reference agonist between two pathways
 * (Kenakin et al. 2012): Δ = test − reference per pathway, ΔΔ = Δ₁ − Δ₂, bias factor 10^ΔΔ.
 * Standard errors by propagation of independent errors: se(ΔΔ) = √(sum of the four variances).
 * 95 % CI with Student's t on the Welch–Satterthwaite degrees of freedom when every input has
 * `dof`, else with the normal quantile 1.96; null when any se is missing.
 */
export function biasFactor(test: { pathway1: TransductionValue; pathway2: TransductionValue }, reference: { pathway1: TransductionValue; pathway2: TransductionValue }): BiasResult {
  const items = [test.pathway1, reference.pathway1, test.pathway2, reference.pathway2];
  const combine = (parts: TransductionValue[], value: number): DerivedEstimate & { dof: number | null } => {
    if (parts.some((p) => p.se === null || p.se === undefined || !Number.isFinite(p.se))) return { value, se: null, ci95: null, dof: null };
    const variances = parts.map((p) => p.se! * p.se!);
    const variance = variances.reduce((s, v) => s + v, 0);
    const se = Math.sqrt(variance);
    let dof: number | null = null;
    if (parts.every((p) => p.dof !== undefined && p.dof !== null && p.dof > 0)) {
      const denominator = parts.reduce((s, p, i) => s + (variances[i] * variances[i]) / p.dof!, 0);
      dof = denominator > 0 ? (variance * variance) / denominator : Infinity;
    }
    const q = dof === null ? tCritical95(Infinity) : tCritical95(dof);
    return { value, se, ci95: [value - q * se, value + q * se], dof };
  };
  const d1 = combine([items[0], items[1]], items[0].value - items[1].value);
  const d2 = combine([items[2], items[3]], items[2].value - items[3].value);
  const dd = combine(items, d1.value - d2.value);
  return {
    deltaPathway1: { value: d1.value, se: d1.se, ci95: d1.ci95 },
    deltaPathway2: { value: d2.value, se: d2.se, ci95: d2.ci95 },
    deltaDelta: dd,
    biasFactor: { value: 10 ** dd.value, ci95: dd.ci95 ? [10 ** dd.ci95[0], 10 ** dd.ci95[1]] : null },
  };
}
