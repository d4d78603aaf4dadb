// Schild analysis of one antagonist-mode run (Arunlakshana & Schild 1959; shared/REFERENCES.md §3).
//
// Each agonist curve carries the antagonist concentration [B] it was measured at (0 = control)
// and either its fitted EC50 or its raw points (then fitted here with `fitFourPL`). Dose ratios
// DR = EC50([B]) / EC50(0), with EC50(0) the geometric mean of the control curves. For simple
// competitive antagonism DR = 1 + [B]/KB (Gaddum 1937, Schild 1949 — years from memory), so
//
//   log(DR − 1) = slope·log[B] + intercept,   slope 1 and intercept −log KB = pKB.
//
// Regression: ordinary least squares of log(DR − 1) on log[B] over every usable curve (replicate
// curves at one [B] count as separate points); slope SE and 95 % CI with Student's t on n − 2
// degrees of freedom (`tCritical95`).
// pA2 = −(x-intercept) = intercept / slope. Its standard error is by the delta method,
//   var(a/b) = var(a)/b² + a²·var(b)/b⁴ − 2a·cov(a, b)/b³,
// and its 95 % CI by Fieller's theorem (Fieller 1954 — from memory), which respects the
// asymmetry of a ratio; the Fieller interval is unbounded (reported null, with a message) when the
// slope is not significantly different from 0 (g = t²·var(b)/b² ≥ 1).
// pKB: from the regression constrained to slope 1, pKB = mean(log(DR − 1) − log[B]) with SE
// sd/√n and a t CI on n − 1 dof; reported only when the slope is compatible with 1 (no
// slope-not-unity flag) and no saturating shift is flagged, since it assumes competition.
// With a single antagonist concentration this is the single-point pA2 = log(DR − 1) − log[B].
// The control EC50 is shared by every dose ratio, so its error moves all log(DR − 1) together and
// does not show in the residuals. When the control's log EC50 standard error is known (fitted
// here from points, or passed as `logEC50Se`), it is propagated: with σ0² the variance of the
// control's mean log10 EC50 and c_i = ∂y_i/∂logEC50(0) = −DR_i/(DR_i − 1), the covariance of
// (intercept, slope) becomes s²(XᵀX)⁻¹ + σ0²·h·hᵀ with h = (XᵀX)⁻¹Xᵀc, and var(pKB) gains σ0²·c̄².
// The t quantile of each interval then uses the Welch–Satterthwaite effective degrees of freedom
// of its two variance parts (residual part on n − 2, or n − 1 for pKB; control part on the control
// fit's dof, ∞ when an SE is passed without `logEC50Dof`); the Fieller interval uses pA2's.
// Without a control SE (EC50s passed without one) the usual OLS errors are reported, as
// scipy.stats.linregress gives them, and a message says the control's error is not included.
// Simulated in development (seeded runs of a control and 4 antagonist curves fitted by
// fitFourPL, pKB 8.5): without the propagation the pA2 interval covered the truth in 89 of 100
// runs; with it, in 94 % of 300 runs (slope interval: 93 %).
//
// Flags (thresholds are common practice, not a published standard):
// - no-control: no curve at [B] = 0 with a usable EC50; nothing else is computed.
// - dose-ratio-not-above-1: some curves gave DR ≤ 1 (no rightward shift); they are left out of
//   the regression and listed in `excluded` (log(DR − 1) is undefined for them).
// - too-few-concentrations: fewer than 3 distinct antagonist concentrations with a usable dose
//   ratio (a slope needs 2, a CI on it 3).
// - slope-not-unity: the slope's 95 % CI excludes 1 and |slope − 1| ≥ 0.1 (a deviation too small
//   to matter is not flagged, however precise the fit), or |slope − 1| > 0.3.
// - saturating-shift: the shift stops growing at the top, the signature of an allosteric
//   modulator with limited cooperativity (DR → 1/α; ATCM, REFERENCES.md §7). Rule (ours): take
//   the highest antagonist concentration and the highest one at least 0.5 log units below it;
//   a competitive antagonist raises log(DR − 1) by the same amount Δlog[B]; flag when the mean
//   log(DR − 1) rises by less than half of Δlog[B].
// - depressed-maximum: the agonist maximum with antagonist falls more than 20 % below the control
//   maximum (possibly non-competitive or insurmountable antagonism).
// - not-fitted: some curves' raw points gave no usable EC50 (fit failed or EC50 censored at the
//   tested range); listed in `excluded`.

import { agonistPotency, tCritical95, type CurvePoint, type Estimate } from './curve-fit.js';

export interface SchildCurve {
  /** Molar antagonist concentration; 0 for the control (agonist alone). */
  antagonistConcM: number;
  /** Fitted agonist EC50 (M) of this curve; when absent, `points` are fitted. */
  ec50M?: number | null;
  /** Standard error of log10 EC50, used for the control curves (see the file header). */
  logEC50Se?: number | null;
  /** Degrees of freedom behind `logEC50Se` (∞ when absent). */
  logEC50Dof?: number | null;
  /** Agonist maximal response of this curve (same units for all curves), for depressed-maximum. */
  emax?: number | null;
  /** Raw agonist points (log M), fitted with fitFourPL when `ec50M` is absent. */
  points?: CurvePoint[];
  /** Caller's id, echoed in the output. */
  id?: string;
}

export interface SchildOptions {
  /** |slope − 1| above this flags slope-not-unity (default 0.3). */
  slopeTolerance?: number;
  /** A CI that excludes 1 flags slope-not-unity only when |slope − 1| reaches this (default 0.1). */
  minSlopeDeviation?: number;
  /** saturating-shift when the top increment is below this fraction of Δlog[B] (default 0.5). */
  saturationFraction?: number;
  /** Smallest Δlog[B] for the saturation rule (default 0.5). */
  saturationMinStep?: number;
  /** depressed-maximum when Emax falls by more than this fraction of the control (default 0.2). */
  depressedMaxFraction?: number;
}

export const DEFAULT_SCHILD_OPTIONS: Required<SchildOptions> = {
  slopeTolerance: 0.3,
  minSlopeDeviation: 0.1,
  saturationFraction: 0.5,
  saturationMinStep: 0.5,
  depressedMaxFraction: 0.2,
};

export type SchildFlag = 'no-control' | 'dose-ratio-not-above-1' | 'too-few-concentrations' | 'slope-not-unity' | 'saturating-shift' | 'depressed-maximum' | 'not-fitted';

export interface SchildPoint {
  id?: string;
  antagonistConcM: number;
  logB: number;
  doseRatio: number;
  /** log10(DR − 1). */
  logDrMinus1: number;
}

export interface SchildExcluded {
  id?: string;
  antagonistConcM: number;
  doseRatio: number | null;
  reason: string;
}

export interface SchildResult {
  /** False when no regression line could be drawn (no control, or no usable antagonist curve). */
  ok: boolean;
  controlEc50M: number | null;
  controlEmax: number | null;
  points: SchildPoint[];
  excluded: SchildExcluded[];
  /** Number of regression points and residual degrees of freedom (n − 2). */
  n: number;
  dof: number;
  /** Schild slope (null with fewer than 2 distinct concentrations). */
  slope: Estimate | null;
  intercept: Estimate | null;
  /** pA2 = intercept/slope: se by the delta method, ci95 by Fieller's theorem. */
  pA2: Estimate | null;
  /** pKB from the slope-1 fit, when the slope is compatible with 1 (see header). */
  pKB: Estimate | null;
  /** Covariance of [intercept, slope]. */
  covariance: [[number, number], [number, number]] | null;
  flags: SchildFlag[];
  messages: string[];
}

const free = (value: number, se: number | null, ci95: [number, number] | null): Estimate => ({ value, se, ci95, fixed: false });

/**
 * Schild regression over one run's agonist curves (see the file header for the method, the flags
 * and their thresholds). Options override DEFAULT_SCHILD_OPTIONS.
 */
export function schildAnalysis(curves: readonly SchildCurve[], options: SchildOptions = {}): SchildResult {
  const opts = { ...DEFAULT_SCHILD_OPTIONS, ...options };
  const flags: SchildFlag[] = [];
  const messages: string[] = [];
  const flag = (f: SchildFlag, message: string) => {
    if (flags.includes(f)) return;
    flags.push(f);
    messages.push(message);
  };
  const excluded: SchildExcluded[] = [];

  // EC50 and Emax of every curve (fitted from the points when needed).
  const resolved: { curve: SchildCurve; ec50: number; emax: number | null; logSe: number | null; logDof: number }[] = [];
  for (const curve of curves) {
    if (!(curve.antagonistConcM >= 0) || !Number.isFinite(curve.antagonistConcM)) {
      excluded.push({ id: curve.id, antagonistConcM: curve.antagonistConcM, doseRatio: null, reason: 'antagonist concentration is not a finite number ≥ 0' });
      continue;
    }
    const potency = agonistPotency(curve);
    if (!potency.ok) {
      const fit = potency.fit;
      const why = !fit.ok ? (fit.flags.includes('flat') ? 'no agonist response (flat curve)' : 'too few points to fit') : 'agonist EC50 outside the tested range (censored)';
      excluded.push({ id: curve.id, antagonistConcM: curve.antagonistConcM, doseRatio: null, reason: why });
      flag('not-fitted', 'Some curves gave no usable agonist EC50 and are left out (see the excluded list).');
      continue;
    }
    const { ec50, emax, logSe, logDof } = potency;
    if (ec50 === null || !(ec50 > 0)) {
      excluded.push({ id: curve.id, antagonistConcM: curve.antagonistConcM, doseRatio: null, reason: 'no agonist EC50' });
      flag('not-fitted', 'Some curves gave no usable agonist EC50 and are left out (see the excluded list).');
      continue;
    }
    resolved.push({ curve, ec50, emax, logSe, logDof });
  }

  const controls = resolved.filter((r) => r.curve.antagonistConcM === 0);
  const empty = (): SchildResult => ({ ok: false, controlEc50M: null, controlEmax: null, points: [], excluded, n: 0, dof: 0, slope: null, intercept: null, pA2: null, pKB: null, covariance: null, flags, messages });
  if (!controls.length) {
    flag('no-control', 'No control curve (agonist without antagonist) with a usable EC50: dose ratios cannot be computed.');
    return empty();
  }
  const controlEc50 = 10 ** (controls.reduce((s, r) => s + Math.log10(r.ec50), 0) / controls.length);
  const controlEmaxes = controls.map((r) => r.emax).filter((e): e is number => e !== null && Number.isFinite(e));
  const controlEmax = controlEmaxes.length ? controlEmaxes.reduce((s, e) => s + e, 0) / controlEmaxes.length : null;
  // Variance of the mean control log EC50 (null unless every control has an SE).
  const controlVar = controls.every((r) => r.logSe !== null && Number.isFinite(r.logSe)) ? controls.reduce((s, r) => s + r.logSe! ** 2, 0) / controls.length ** 2 : null;
  // Welch–Satterthwaite dof of that variance (∞ when every part is known exactly).
  const controlParts = controls.map((r) => ({ v: (r.logSe ?? 0) ** 2 / controls.length ** 2, dof: r.logDof }));
  const controlDofDenominator = controlParts.reduce((s, q) => s + (q.dof > 0 && Number.isFinite(q.dof) ? (q.v * q.v) / q.dof : 0), 0);
  const controlDof = controlVar !== null && controlDofDenominator > 0 ? (controlVar * controlVar) / controlDofDenominator : Infinity;
  /** t quantile for a variance made of a residual part (on `dof1`) and a control part. */
  const tFor = (residualPart: number, sharedPart: number, dof1: number) => {
    const total = residualPart + sharedPart;
    const denominator = (residualPart * residualPart) / dof1 + (Number.isFinite(controlDof) ? (sharedPart * sharedPart) / controlDof : 0);
    if (denominator > 0) return tCritical95((total * total) / denominator);
    return tCritical95(total > 0 ? Infinity : dof1); // only an exactly known control part
  };

  const points: SchildPoint[] = [];
  for (const r of resolved) {
    if (r.curve.antagonistConcM === 0) continue;
    const doseRatio = r.ec50 / controlEc50;
    if (controlEmax !== null && controlEmax > 0 && r.emax !== null && r.emax < (1 - opts.depressedMaxFraction) * controlEmax) {
      flag('depressed-maximum', `The agonist maximum falls more than ${Math.round(opts.depressedMaxFraction * 100)} % below the control with antagonist present: the antagonism may be non-competitive (insurmountable), and the dose ratios then mean less.`);
    }
    if (!(doseRatio > 1)) {
      excluded.push({ id: r.curve.id, antagonistConcM: r.curve.antagonistConcM, doseRatio, reason: 'dose ratio ≤ 1 (no rightward shift): log(DR − 1) is undefined' });
      flag('dose-ratio-not-above-1', 'Some antagonist concentrations gave no rightward shift (dose ratio ≤ 1); they are left out of the regression.');
      continue;
    }
    points.push({ id: r.curve.id, antagonistConcM: r.curve.antagonistConcM, logB: Math.log10(r.curve.antagonistConcM), doseRatio, logDrMinus1: Math.log10(doseRatio - 1) });
  }

  const n = points.length;
  const xs = points.map((p) => p.logB);
  const ys = points.map((p) => p.logDrMinus1);
  const distinct = [...new Set(xs)].sort((a, b) => a - b);
  if (distinct.length < 3) {
    flag('too-few-concentrations', `Only ${distinct.length} antagonist concentration${distinct.length === 1 ? '' : 's'} gave a usable dose ratio; a Schild slope with a confidence interval needs at least 3.`);
  }
  if (n === 0) return { ...empty(), controlEc50M: controlEc50, controlEmax };

  // Slope-1 (constrained) estimate: pKB = mean(log(DR − 1) − log[B]).
  const d = points.map((p) => p.logDrMinus1 - p.logB);
  const dMean = d.reduce((s, v) => s + v, 0) / n;
  // ∂ log10(DR − 1) / ∂ log10 EC50(0) for each point.
  const c = points.map((p) => -p.doseRatio / (p.doseRatio - 1));
  const cMean = c.reduce((s, v) => s + v, 0) / n;
  const sharedVar = controlVar ?? 0;
  const dResidual = n > 1 ? d.reduce((s, v) => s + (v - dMean) ** 2, 0) / (n - 1) / n : null;
  const dSe = dResidual !== null ? Math.sqrt(dResidual + sharedVar * cMean * cMean) : null;
  if (controlVar === null) messages.push('The control EC50 has no standard error, so its uncertainty (shared by every dose ratio) is not included in the standard errors and intervals.');
  const tD = dResidual !== null ? tFor(dResidual, sharedVar * cMean * cMean, n - 1) : NaN;
  const constrained = free(dMean, dSe, dSe !== null ? [dMean - tD * dSe, dMean + tD * dSe] : null);

  let slope: Estimate | null = null;
  let intercept: Estimate | null = null;
  let pA2: Estimate | null = null;
  let covariance: SchildResult['covariance'] = null;
  const dof = Math.max(n - 2, 0);
  if (distinct.length >= 2) {
    const xMean = xs.reduce((s, v) => s + v, 0) / n;
    const yMean = ys.reduce((s, v) => s + v, 0) / n;
    const sxx = xs.reduce((s, v) => s + (v - xMean) ** 2, 0);
    const sxy = xs.reduce((s, v, i) => s + (v - xMean) * (ys[i] - yMean), 0);
    const b = sxy / sxx;
    const a = yMean - b * xMean;
    const ratio = a / b;
    if (dof > 0) {
      const rss = xs.reduce((s, v, i) => s + (ys[i] - a - b * v) ** 2, 0);
      const s2 = rss / dof;
      // h = (XᵀX)⁻¹Xᵀc: the regression of c on log[B] (slope hb, intercept ha).
      const hb = xs.reduce((s, v, i) => s + (v - xMean) * (c[i] - cMean), 0) / sxx;
      const ha = cMean - hb * xMean;
      const rbb = s2 / sxx;
      const raa = s2 * (1 / n + (xMean * xMean) / sxx);
      const rab = (-xMean * s2) / sxx;
      const vbb = rbb + sharedVar * hb * hb;
      const vaa = raa + sharedVar * ha * ha;
      const vab = rab + sharedVar * ha * hb;
      covariance = [[vaa, vab], [vab, vbb]];
      const tb = tFor(rbb, sharedVar * hb * hb, dof);
      const ta = tFor(raa, sharedVar * ha * ha, dof);
      slope = free(b, Math.sqrt(vbb), [b - tb * Math.sqrt(vbb), b + tb * Math.sqrt(vbb)]);
      intercept = free(a, Math.sqrt(vaa), [a - ta * Math.sqrt(vaa), a + ta * Math.sqrt(vaa)]);
      // Delta method: gradient of a/b is (1/b, −a/b²); split into the residual and control parts.
      const ga = 1 / b;
      const gb = -a / (b * b);
      const residualRatio = ga * ga * raa + gb * gb * rbb + 2 * ga * gb * rab;
      const sharedRatio = sharedVar * (ga * ha + gb * hb) ** 2;
      const varRatio = residualRatio + sharedRatio;
      const fieller = fiellerInterval(a, b, vaa, vbb, vab, tFor(Math.max(residualRatio, 0), sharedRatio, dof));
      if (!fieller) messages.push('The Schild slope is not significantly different from 0, so the confidence interval of pA2 is unbounded (Fieller) and is not reported.');
      pA2 = free(ratio, Math.sqrt(Math.max(varRatio, 0)), fieller);
    } else {
      slope = free(b, null, null);
      intercept = free(a, null, null);
      pA2 = free(ratio, null, null);
    }
    const ciExcludesOne = !!slope.ci95 && (slope.ci95[0] > 1 || slope.ci95[1] < 1);
    if ((ciExcludesOne && Math.abs(b - 1) >= opts.minSlopeDeviation) || Math.abs(b - 1) > opts.slopeTolerance) {
      flag('slope-not-unity', `The Schild slope (${b.toFixed(2)}) differs from 1 (${slope.ci95 ? `95 % CI ${slope.ci95[0].toFixed(2)} to ${slope.ci95[1].toFixed(2)}` : 'no CI'}): the antagonism may not be simple and competitive, so pA2 is not pKB.`);
    }
  } else {
    // One concentration: the single-point pA2 = log(DR − 1) − log[B] (mean over replicate curves).
    pA2 = constrained;
  }

  // Saturating shift: the increment of log(DR − 1) over the top ≥ 0.5 log units of [B].
  if (distinct.length >= 2) {
    const meanAt = (x: number) => {
      const ys2 = points.filter((p) => p.logB === x).map((p) => p.logDrMinus1);
      return ys2.reduce((s, v) => s + v, 0) / ys2.length;
    };
    const top = distinct[distinct.length - 1];
    const below = distinct.filter((x) => x <= top - opts.saturationMinStep);
    if (below.length) {
      const prev = below[below.length - 1];
      const rise = meanAt(top) - meanAt(prev);
      if (rise < opts.saturationFraction * (top - prev)) {
        flag('saturating-shift', `Raising the antagonist concentration ${(top - prev).toFixed(2)} log units raises log(DR − 1) by only ${rise.toFixed(2)} (a competitive antagonist would raise it by as much): the shift saturates, as for an allosteric modulator with limited cooperativity.`);
      }
    }
  }

  const pKB = !flags.includes('slope-not-unity') && !flags.includes('saturating-shift') ? constrained : null;
  return { ok: true, controlEc50M: controlEc50, controlEmax, points, excluded, n, dof, slope, intercept, pA2, pKB, covariance, flags, messages };
}

/**
 * Fieller's 95 % interval for the ratio a/b of two estimates with variances vaa, vbb and covariance
 * vab, t the critical value. Null when the interval is unbounded (g = t²·vbb/b² ≥ 1).
 */
export function fiellerInterval(a: number, b: number, vaa: number, vbb: number, vab: number, t: number): [number, number] | null {
  const g = (t * t * vbb) / (b * b);
  if (!(g < 1)) return null;
  const r = a / b;
  // vbb = 0 (a perfect line) leaves the interval of a/b from var(a) alone.
  const centre = vbb > 0 ? r - (g * vab) / vbb : r;
  const radicand = vbb > 0 ? vaa - 2 * r * vab + r * r * vbb - g * (vaa - (vab * vab) / vbb) : vaa;
  if (radicand < 0) return null;
  const half = (t / Math.abs(b)) * Math.sqrt(radicand);
  return [(centre - half) / (1 - g), (centre + half) / (1 - g)];
}
