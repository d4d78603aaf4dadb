// Four-parameter logistic (Hill) concentration–response fit.
//
//   Y = Bottom + (Top − Bottom) / (1 + 10^((logEC50 − X)·nH)),   X = log10 molar concentration
//
// (shared/REFERENCES.md §5; equals drc's LL.4 with b = −nH). Decreasing curves (inhibition) come
// out with Top > Bottom and a negative nH: when Top, Bottom and nH are all free, a fit that lands on
// the mirror form (Top < Bottom, nH > 0 — the same curve) is swapped back. When the user fixes
// any of the three, the fixed values decide the orientation.
//
// Fitting: ordinary least squares through `leastSquares` (least-squares.ts) over the free
// parameters only; fixed ones are substituted exactly. Excluded points, and points with a
// non-finite concentration or response, are left out of everything (n, tested range, flags). Several starts are tried and the lowest RSS
// is kept. Parameters are kept in a generous box so that an ill-determined curve cannot run off
// to infinity: logEC50 within 3 log units of the tested range, |nH| ≤ 10, Top and Bottom within
// 10 response spans of the observed responses. A fit that ends on a box edge is outside the range
// or ambiguous anyway and is flagged as such.
//
// Flags (one plain sentence each in `messages`):
// - too-few-points: fewer included points than free parameters + 1, or fewer distinct
//   concentrations than free parameters (replicates cannot pin down the shape). No fit is made;
//   numbers (free parameters, rss, rSquared, potency logValue) are NaN (null in JSON), ok = false.
// R² = 1 − RSS/TSS; 0 when all responses are equal (TSS = 0).
// - flat: extra-sum-of-squares F-test of the fitted curve against a horizontal line at the mean
//   (1 parameter): flat when p > 0.05, i.e. the curve does not explain significantly more
//   than a constant. Chosen over "|Top − Bottom| < 3·residual SD" because the fitted Top and
//   Bottom of a flat or partial data set are extrapolations and can be arbitrarily large, whereas
//   the F-test only uses what was measured. Needs at least 2 free parameters (with only logEC50
//   free, the fixed Top and Bottom already assert a response). Constant data are flat.
//   ok = false, potency '>' the highest tested concentration, and no other flag is given (fits to
//   noise often end in a flat valley, so not-converged would add nothing). Simulated with 11
//   concentrations in duplicate and noise SD 5 (400 curves each): pure noise is called flat 97 %
//   of the time; a true window of 5 / 10 / 15 / 20 is called flat 75 / 14 / 0.3 / 0 %.
// - incomplete-top / incomplete-bottom: the fitted curve, evaluated at the two ends of the tested
//   range, does not come within 20 % of the span of its upper (max of Top, Bottom) / lower
//   plateau; not raised for a plateau whose value the user fixed.
// - ambiguous: logEC50 has no standard error, or its 95 % CI is wider than 2 log units.
// - above-range / below-range: fitted logEC50 outside the tested range; potency is then censored
//   at the bound ('>' highest, '<' lowest tested logConc), whatever the curve's direction.
// - not-converged: the least-squares convergence test failed (see least-squares.ts).

import { leastSquares, residualSumOfSquares } from './least-squares.js';

export type FitFlag = 'too-few-points' | 'flat' | 'incomplete-top' | 'incomplete-bottom' | 'ambiguous' | 'above-range' | 'below-range' | 'not-converged';

export interface CurvePoint {
  logConc: number;
  response: number;
  excluded?: boolean;
}

export interface FixedParams {
  top?: number;
  bottom?: number;
  hillSlope?: number;
}

export interface Estimate {
  value: number;
  se: number | null;
  ci95: [number, number] | null;
  fixed: boolean;
}

export interface FourPlParams {
  bottom: number;
  top: number;
  logEC50: number;
  hillSlope: number;
}

export interface FourPlFit {
  /** False when too few points or flat (no curve to report). */
  ok: boolean;
  n: number;
  dof: number;
  rss: number;
  rSquared: number;
  iterations: number;
  params: { bottom: Estimate; top: Estimate; logEC50: Estimate; hillSlope: Estimate };
  /** Min and max logConc of the included points. */
  testedRange: [number, number];
  /** logEC50 censored at the tested range; a flat curve gives '>' the top of the range. */
  potency: { qualifier: '=' | '<' | '>'; logValue: number };
  flags: FitFlag[];
  /** One plain-English sentence per flag. */
  messages: string[];
}

const NAMES = ['bottom', 'top', 'logEC50', 'hillSlope'] as const;
type Name = (typeof NAMES)[number];

/** Significance level of the flat test. */
export const FLAT_ALPHA = 0.05;
/** A plateau counts as reached when the curve gets within this fraction of the span of it. */
export const PLATEAU_FRACTION = 0.2;
/** logEC50 CI wider than this (log units) is ambiguous. */
export const AMBIGUOUS_CI_WIDTH = 2;
const MAX_SLOPE = 10;
const EC50_MARGIN = 3;

export function fourPL(x: number, p: FourPlParams): number {
  return p.bottom + (p.top - p.bottom) / (1 + Math.exp((p.logEC50 - x) * p.hillSlope * Math.LN10));
}

export function fitFourPL(points: CurvePoint[], fixed: FixedParams = {}): FourPlFit {
  const used = points.filter((pt) => !pt.excluded && Number.isFinite(pt.logConc) && Number.isFinite(pt.response));
  const x = used.map((pt) => pt.logConc);
  const y = used.map((pt) => pt.response);
  const n = used.length;
  const fixedValues: Partial<Record<Name, number>> = {};
  if (fixed.bottom !== undefined) fixedValues.bottom = fixed.bottom;
  if (fixed.top !== undefined) fixedValues.top = fixed.top;
  if (fixed.hillSlope !== undefined) fixedValues.hillSlope = fixed.hillSlope;
  const free = NAMES.filter((name) => fixedValues[name] === undefined);
  const testedRange: [number, number] = n > 0 ? [Math.min(...x), Math.max(...x)] : [NaN, NaN];
  const distinct = new Set(x).size;

  if (n < free.length + 1 || distinct < free.length) {
    const estimate = (name: Name): Estimate => ({ value: fixedValues[name] ?? NaN, se: null, ci95: null, fixed: fixedValues[name] !== undefined });
    return {
      ok: false,
      n,
      dof: n - free.length,
      rss: NaN,
      rSquared: NaN,
      iterations: 0,
      params: { bottom: estimate('bottom'), top: estimate('top'), logEC50: estimate('logEC50'), hillSlope: estimate('hillSlope') },
      testedRange,
      potency: { qualifier: '=', logValue: NaN },
      flags: ['too-few-points'],
      messages: [`Only ${n} point${n === 1 ? '' : 's'} at ${distinct} concentration${distinct === 1 ? '' : 's'} are included; fitting ${free.length} free parameter${free.length === 1 ? '' : 's'} needs at least ${free.length + 1} points at ${free.length} or more concentrations.`],
    };
  }

  const [xmin, xmax] = testedRange;
  const ymin = Math.min(...y);
  const ymax = Math.max(...y);
  const yspan = ymax - ymin || Math.abs(ymax) || 1;

  // The optimiser works on affinely rescaled parameters of order 1 (Bottom/Top: 1 + (v − min
  // response)/response span; logEC50: 1 + (v − lowest logConc)/tested span; nH as is), so its
  // relative finite-difference steps suit every parameter — a Bottom that ends at 1e-16 would
  // otherwise get a step lost in rounding. Standard errors scale back by the same factors.
  const xscale = xmax - xmin || 1;
  const affine: Record<Name, [offset: number, factor: number]> = {
    bottom: [ymin - yspan, yspan],
    top: [ymin - yspan, yspan],
    logEC50: [xmin - xscale, xscale],
    hillSlope: [0, 1],
  };
  const toInternal = (name: Name, v: number) => (v - affine[name][0]) / affine[name][1];
  const fromInternal = (name: Name, u: number) => affine[name][0] + u * affine[name][1];
  // Full parameter vector from the free (internal) ones.
  const expand = (q: number[]): FourPlParams => {
    const full = { ...fixedValues } as Record<Name, number>;
    free.forEach((name, k) => (full[name] = fromInternal(name, q[k])));
    return full;
  };
  const model = (q: number[]) => {
    const p = expand(q);
    return (xi: number) => fourPL(xi, p);
  };
  const box: Record<Name, [number, number]> = {
    bottom: [ymin - 10 * yspan, ymax + 10 * yspan],
    top: [ymin - 10 * yspan, ymax + 10 * yspan],
    logEC50: [xmin - EC50_MARGIN, xmax + EC50_MARGIN],
    hillSlope: [-MAX_SLOPE, MAX_SLOPE],
  };
  const lower = free.map((name) => toInternal(name, box[name][0]));
  const upper = free.map((name) => toInternal(name, box[name][1]));

  let best: ReturnType<typeof leastSquares> | null = null;
  let iterations = 0;
  for (const start of startingValues(x, y, fixedValues)) {
    const q = free.map((name) => toInternal(name, start[name]));
    // 10 library iterations bring a start into the basin; the polish in leastSquares, which has a
    // real convergence test, finishes (the library would otherwise run all 100 of its iterations).
    const result = leastSquares(model, x, y, q, { lower, upper, maxIterations: 10 });
    iterations += result.iterations;
    if (!best || result.rss < best.rss) best = result;
  }
  const fit = best!;

  // Map back to named values and standard errors; swap a mirrored fit back to Top > Bottom.
  const value = expand(fit.params) as Record<Name, number>;
  const se: Record<Name, number | null> = { bottom: null, top: null, logEC50: null, hillSlope: null };
  free.forEach((name, k) => {
    const s = fit.se[k];
    se[name] = s === null ? null : s * affine[name][1];
  });
  if (free.length === 4 && value.top < value.bottom) {
    [value.top, value.bottom] = [value.bottom, value.top];
    [se.top, se.bottom] = [se.bottom, se.top];
    value.hillSlope = -value.hillSlope;
  }

  const dof = fit.dof;
  const t = dof > 0 ? tCritical95(dof) : NaN;
  const estimate = (name: Name): Estimate => {
    const isFixed = fixedValues[name] !== undefined;
    const s = isFixed ? null : se[name];
    return { value: value[name], se: s, ci95: s !== null && dof > 0 ? [value[name] - t * s, value[name] + t * s] : null, fixed: isFixed };
  };
  const params = { bottom: estimate('bottom'), top: estimate('top'), logEC50: estimate('logEC50'), hillSlope: estimate('hillSlope') };

  const mean = y.reduce((s, v) => s + v, 0) / n;
  const tss = y.reduce((s, v) => s + (v - mean) ** 2, 0);
  const rss = residualSumOfSquares(model, fit.params, x, y);
  const rSquared = tss > 0 ? 1 - rss / tss : 0;
  const increasing = (value.top - value.bottom) * value.hillSlope >= 0;
  const word = increasing ? 'EC50' : 'IC50';

  const flags: FitFlag[] = [];
  const messages: string[] = [];
  const flag = (f: FitFlag, message: string) => {
    flags.push(f);
    messages.push(message);
  };

  const flatP = flatTestP(tss, rss, free.length, n);
  if (flatP !== null && flatP > FLAT_ALPHA) {
    flag('flat', tss === 0
      ? 'The response is the same at every concentration, so no curve is reported.'
      : `The response does not change significantly across the tested concentrations (F-test against a horizontal line, p = ${flatP.toFixed(2)}), so no curve is reported.`);
    // No not-converged flag here: fits to noise crawl along flat valleys, and no curve is reported.
    return { ok: false, n, dof, rss, rSquared, iterations, params, testedRange, potency: { qualifier: '>', logValue: xmax }, flags, messages };
  }

  if (!fit.converged) flag('not-converged', 'The fit did not converge, so the parameters may not be the best fit.');
  const upperName: Name = value.top >= value.bottom ? 'top' : 'bottom';
  const lowerName: Name = upperName === 'top' ? 'bottom' : 'top';
  const plateauSpan = Math.abs(value.top - value.bottom);
  const ends = [fourPL(xmin, value), fourPL(xmax, value)];
  const low = Math.min(value.top, value.bottom);
  if (plateauSpan > 0 && fixedValues[upperName] === undefined && Math.max(...ends) < low + (1 - PLATEAU_FRACTION) * plateauSpan) {
    flag('incomplete-top', 'The curve does not reach its upper plateau within the tested concentrations, so that plateau is extrapolated.');
  }
  if (plateauSpan > 0 && fixedValues[lowerName] === undefined && Math.min(...ends) > low + PLATEAU_FRACTION * plateauSpan) {
    flag('incomplete-bottom', 'The curve does not reach its lower plateau within the tested concentrations, so that plateau is extrapolated.');
  }
  const ci = params.logEC50.ci95;
  if (!ci) {
    flag('ambiguous', `The ${word} cannot be pinned down by these data (no standard error could be computed).`);
  } else if (ci[1] - ci[0] > AMBIGUOUS_CI_WIDTH) {
    flag('ambiguous', `The ${word} is poorly determined: its 95 % confidence interval spans ${(ci[1] - ci[0]).toFixed(1)} log units.`);
  }
  let potency: FourPlFit['potency'] = { qualifier: '=', logValue: value.logEC50 };
  if (value.logEC50 > xmax) {
    flag('above-range', `The fitted ${word} lies above the highest tested concentration, so it is reported as log ${word} > ${xmax.toFixed(2)}.`);
    potency = { qualifier: '>', logValue: xmax };
  } else if (value.logEC50 < xmin) {
    flag('below-range', `The fitted ${word} lies below the lowest tested concentration, so it is reported as log ${word} < ${xmin.toFixed(2)}.`);
    potency = { qualifier: '<', logValue: xmin };
  }
  return { ok: true, n, dof, rss, rSquared, iterations, params, testedRange, potency, flags, messages };
}

/**
 * p-value of the extra-sum-of-squares F-test of the curve (pFree parameters) against a constant
 * (1 parameter); null when the test does not apply (fewer than 2 free parameters or no dof).
 * Constant data give 1 (flat); a perfect fit of non-constant data gives 0.
 */
function flatTestP(tss: number, rss: number, pFree: number, n: number): number | null {
  const df1 = pFree - 1;
  const df2 = n - pFree;
  if (df1 < 1 || df2 < 1) return null;
  if (!(tss > 0) || rss >= tss) return 1;
  if (rss <= 0) return 0;
  const f = (tss - rss) / df1 / (rss / df2);
  return regularizedBeta(df2 / (df2 + df1 * f), df2 / 2, df1 / 2);
}

/**
 * Starting values (up to 6): Top and Bottom (unless fixed) = the largest and smallest of the
 * per-concentration mean responses, which for a monotonic curve are those at the extreme
 * concentrations; the slope's sign from the trend (least-squares line through the points) and
 * the orientation of Top vs Bottom; logEC50 by linear interpolation at half-way between Top and
 * Bottom along the concentration means (the middle of the range when never crossed). Tried with
 * nH = s (s = ±1 from the trend) at that logEC50 and at the quartiles and middle of the tested
 * range, then nH = 3s and nH = −s at the interpolated logEC50. A fixed nH replaces the slopes.
 */
function startingValues(x: number[], y: number[], fixed: Partial<Record<Name, number>>): FourPlParams[] {
  const groups = new Map<number, number[]>();
  x.forEach((xi, i) => groups.set(xi, [...(groups.get(xi) ?? []), y[i]]));
  const xs = [...groups.keys()].sort((a, b) => a - b);
  const means = xs.map((xi) => groups.get(xi)!.reduce((s, v) => s + v, 0) / groups.get(xi)!.length);
  const xmin = xs[0];
  const xmax = xs[xs.length - 1];
  const mx = x.reduce((s, v) => s + v, 0) / x.length;
  const my = y.reduce((s, v) => s + v, 0) / y.length;
  const trend = Math.sign(x.reduce((s, xi, i) => s + (xi - mx) * (y[i] - my), 0)) || 1;

  const top = fixed.top ?? Math.max(...means);
  const bottom = fixed.bottom ?? Math.min(...means);
  const direction = Math.sign(top - bottom) || 1;
  const sign = trend * direction;

  const half = (top + bottom) / 2;
  let interpolated = (xmin + xmax) / 2;
  for (let i = 0; i + 1 < xs.length; i++) {
    const a = means[i] - half;
    const b = means[i + 1] - half;
    if (a === 0) {
      interpolated = xs[i];
      break;
    }
    if (a * b < 0) {
      interpolated = xs[i] + (xs[i + 1] - xs[i]) * (a / (a - b));
      break;
    }
  }
  const span = xmax - xmin;
  const ec50s = [interpolated];
  for (const f of [0.25, 0.5, 0.75]) {
    const c = xmin + f * span;
    if (ec50s.every((e) => Math.abs(e - c) > 0.1 * span)) ec50s.push(c);
  }
  const slopes = fixed.hillSlope !== undefined ? [fixed.hillSlope] : [sign, 3 * sign, -sign];
  const starts: FourPlParams[] = [];
  for (const hillSlope of slopes) {
    for (const logEC50 of hillSlope === slopes[0] ? ec50s : [interpolated]) starts.push({ bottom, top, logEC50, hillSlope });
  }
  return starts;
}

/**
 * Two-sided 95 % critical value of Student's t (the 97.5 % quantile) for `dof` degrees of freedom
 * (any positive real; Infinity gives the normal 1.959964). Found by bisection on the exact tail
 * probability P(|T| > t) = I_{ν/(ν+t²)}(ν/2, 1/2) (regularized incomplete beta). NaN for dof ≤ 0.
 */
export function tCritical95(dof: number): number {
  if (!(dof > 0)) return NaN;
  if (dof === Infinity) return 1.959963984540054;
  const tail = (t: number) => regularizedBeta(dof / (dof + t * t), dof / 2, 0.5);
  let lo = 0;
  let hi = 1;
  while (tail(hi) > 0.05) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-13 * hi; i++) {
    const mid = (lo + hi) / 2;
    if (tail(mid) > 0.05) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/** Regularized incomplete beta I_x(a, b) (continued fraction, modified Lentz). */
export function regularizedBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const front = Math.exp(logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x));
  if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(x, a, b)) / a;
  return 1 - (front * betaContinuedFraction(1 - x, b, a)) / b;
}

function betaContinuedFraction(x: number, a: number, b: number): number {
  const tiny = 1e-300;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 1000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return h;
}

/** ln Γ(z) for z > 0 (Lanczos, g = 7, 9 terms; relative error ~1e-15). */
function logGamma(z: number): number {
  if (z < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * z)) - logGamma(1 - z);
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  const zz = z - 1;
  let s = c[0];
  for (let i = 1; i < 9; i++) s += c[i] / (zz + i);
  const t = zz + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (zz + 0.5) * Math.log(t) - t + Math.log(s);
}

/** An agonist curve as the mechanism analyses take it: given EC50/Emax, or points to fit. */
export interface AgonistCurveInput {
  ec50M?: number | null;
  emax?: number | null;
  points?: CurvePoint[];
  logEC50Se?: number | null;
  logEC50Dof?: number | null;
}

export type AgonistPotency =
  | { ok: true; ec50: number | null; emax: number | null; logSe: number | null; logDof: number }
  | { ok: false; fit: FourPlFit };

/**
 * EC50 and Emax of an agonist curve (Schild and modulation runs): the given values, else a 4PL fit
 * of its points. A fit that fails or gives a censored EC50 answers `ok: false` with the fit, so the
 * caller can say why the curve is left out. Emax is the asymptote the curve rises (or falls) to.
 */
export function agonistPotency(curve: AgonistCurveInput): AgonistPotency {
  let ec50 = curve.ec50M ?? null;
  let emax = curve.emax ?? null;
  let logSe = curve.logEC50Se ?? null;
  let logDof = curve.logEC50Dof ?? Infinity;
  if (ec50 === null && curve.points) {
    const fit = fitFourPL(curve.points);
    if (!fit.ok || fit.potency.qualifier !== '=') return { ok: false, fit };
    ec50 = 10 ** fit.params.logEC50.value;
    if (logSe === null) {
      logSe = fit.params.logEC50.se;
      logDof = fit.dof;
    }
    if (emax === null) emax = fit.params.hillSlope.value >= 0 ? fit.params.top.value : fit.params.bottom.value;
  }
  return { ok: true, ec50, emax, logSe, logDof };
}
