// Allosteric modulation runs: agonist curves at fixed modulator concentrations [B] (0 = control),
// plus the modulator applied alone. Sources: shared/REFERENCES.md §7.
//
// - Fold-shift of the agonist's EC50: FS = EC50(0) / EC50([B]); > 1 = potentiation (leftward
//   shift), < 1 = inhibition. EC50(0) is the geometric mean of the control curves.
// - Change of the agonist's maximum: Emax([B]) / Emax(0) − 1 (a fraction; −0.3 = 30 % lower).
// - The modulator alone: its maximal response over basal and α = Emax(alone) / Emax(reference),
//   the reference being the caller's reference full agonist or else the control agonist curve.
// - Allosteric ternary complex model (ATCM; Ehlert 1988; Christopoulos/May convention, α > 1
//   positive, α < 1 negative, α = 1 neutral — the convention this registry stores), simple form
//   without efficacy modulation: the modulator changes the agonist's affinity only, so its EC50
//   shifts by the same factor as its apparent affinity:
//     EC50([B]) / EC50(0) = (1 + [B]/KB) / (1 + α[B]/KB)   ⇔   FS = (1 + α[B]/KB) / (1 + [B]/KB),
//   tending to α at saturating [B] (the "ceiling" of the shift). log KB and log α are fitted by
//   ordinary least squares on log10 FS (log EC50 errors are roughly normal) with `leastSquares`,
//   where ≥ 2 modulator concentrations were tested; SE from the covariance, 95 % CI with
//   t(n − 2) (`tCritical95`). Box (common practice, not a published standard): log α in [−3, 3],
//   log KB within 3 log units of the tested [B].
// Every fold-shift shares the control EC50, whose error moves all log FS together and does not
// show in the residuals (as in schild.ts). When the control's log EC50 SE σ0 is known it is
// propagated: covariance s²(JᵀJ)⁻¹ + σ0²·h·hᵀ with h = (JᵀJ)⁻¹Jᵀ1 (J by central differences at
// the solution; ∂ log FS/∂ log EC50(0) = 1), and each CI uses the Welch–Satterthwaite dof of its
// residual part (n − 2) and control part (the control fit's dof).
// ATCM flags: too-few-concentrations (< 2 distinct [B] > 0: no fit), kb-undetermined /
// alpha-undetermined (no SE, 95 % CI wider than 2 log units, or the estimate on the box edge —
// e.g. no curvature in the shifts when all [B] ≪ KB, or no shift at all when α ≈ 1),
// not-converged.

import { agonistPotency, AMBIGUOUS_CI_WIDTH, fitFourPL, tCritical95, type CurvePoint, type Estimate } from './curve-fit.js';
import { invertSymmetric, leastSquares } from './least-squares.js';

/**
 * Thresholds for calling a modulator (common practice, not a published standard):
 * PAM when FS ≥ 2 (EC50 at least halved) or Emax rises ≥ 20 %; NAM when FS ≤ 0.5 or Emax falls
 * ≥ 20 %; allosteric agonist when the modulator alone reaches α ≥ 0.2.
 */
export interface ModulationThresholds {
  pamFoldShift: number;
  namFoldShift: number;
  /** Fractional Emax change (either way) that counts as modulation of efficacy. */
  emaxChange: number;
  allostericAgonistAlpha: number;
}

export const DEFAULT_MODULATION_THRESHOLDS: ModulationThresholds = {
  pamFoldShift: 2,
  namFoldShift: 0.5,
  emaxChange: 0.2,
  allostericAgonistAlpha: 0.2,
};

export interface ModulatorCurve {
  /** Molar modulator concentration; 0 for the control (agonist alone). */
  modulatorConcM: number;
  /** Fitted agonist EC50 (M); when absent, `points` are fitted with fitFourPL. */
  ec50M?: number | null;
  /** Agonist maximal response of this curve over basal. */
  emax?: number | null;
  /** Standard error of log10 EC50 and its dof, used for the control curves (see the header). */
  logEC50Se?: number | null;
  logEC50Dof?: number | null;
  points?: CurvePoint[];
  id?: string;
}

export interface ModulatorAlone {
  /** Maximal response of the modulator alone over basal (same units as the agonist curves). */
  emax?: number | null;
  /** Or its raw points, fitted with fitFourPL (a flat curve counts as no response). */
  points?: CurvePoint[];
}

export interface AllostericRunInput {
  curves: ModulatorCurve[];
  modulatorAlone?: ModulatorAlone | null;
  /** Emax of the reference full agonist over basal; defaults to the control agonist curve's. */
  referenceEmax?: number | null;
}

export interface ShiftPoint {
  id?: string;
  modulatorConcM: number;
  logB: number;
  ec50M: number;
  /** EC50(0) / EC50([B]). */
  foldShift: number;
  /** Emax([B]) / Emax(0) − 1, when both are known. */
  emaxChange: number | null;
}

export type AtcmFlag = 'too-few-concentrations' | 'kb-undetermined' | 'alpha-undetermined' | 'not-converged';

export interface AtcmFit {
  ok: boolean;
  n: number;
  dof: number;
  rss: number;
  logKB: Estimate;
  /** log10 α (cooperativity); α > 1 positive, α < 1 negative. */
  logAlpha: Estimate;
  covariance: number[][] | null;
  converged: boolean;
  flags: AtcmFlag[];
  messages: string[];
}

export type ModulatorCall = 'positive allosteric modulator' | 'negative allosteric modulator' | 'allosteric agonist' | 'neutral' | 'inconclusive';

export interface ModulatorClassification {
  call: ModulatorCall;
  /** Human-readable rule that gave the call, e.g. "fold-shift 5.2 ≥ 2 → positive allosteric modulator". */
  rule: string;
}

export interface AllostericResult {
  ok: boolean;
  controlEc50M: number | null;
  controlEmax: number | null;
  shifts: ShiftPoint[];
  excluded: { id?: string; modulatorConcM: number; reason: string }[];
  modulatorAlone: { emax: number; alpha: number | null } | null;
  atcm: AtcmFit;
  classification: ModulatorClassification;
  messages: string[];
}

function log10OnePlusPow10(d: number): number {
  return d > 0 ? d + Math.log1p(Math.pow(10, -d)) / Math.LN10 : Math.log1p(Math.pow(10, d)) / Math.LN10;
}

/** ATCM fold-shift FS = EC50(0)/EC50([B]) = (1 + α[B]/KB) / (1 + [B]/KB) (REFERENCES.md §7, as 1/DR). */
export function atcmFoldShift(modulatorConcM: number, kbM: number, alpha: number): number {
  if (!(kbM > 0) || !(alpha >= 0) || !(modulatorConcM >= 0)) throw new RangeError('the ATCM needs KB > 0, α ≥ 0 and [B] ≥ 0');
  return (1 + (alpha * modulatorConcM) / kbM) / (1 + modulatorConcM / kbM);
}

/** log10 FS at log[B] for log KB and log α, in a form that neither overflows nor loses precision. */
export function atcmLogFoldShift(logB: number, logKB: number, logAlpha: number): number {
  return log10OnePlusPow10(logAlpha + logB - logKB) - log10OnePlusPow10(logB - logKB);
}

/**
 * Fits log KB and log α of the ATCM to observed fold-shifts (each a separate point; [B] > 0).
 * Needs ≥ 2 distinct modulator concentrations; see the file header for the flags. `control`:
 * the standard error of the control's mean log10 EC50 and its dof (∞ when absent), propagated
 * as described in the header.
 */
export function fitAtcm(shifts: readonly { modulatorConcM: number; foldShift: number }[], control: { logSe: number; dof?: number } | null = null): AtcmFit {
  const used = shifts.filter((s) => s.modulatorConcM > 0 && s.foldShift > 0 && Number.isFinite(s.foldShift));
  const x = used.map((s) => Math.log10(s.modulatorConcM));
  const y = used.map((s) => Math.log10(s.foldShift));
  const n = used.length;
  const distinct = [...new Set(x)].sort((a, b) => a - b);
  const nan: Estimate = { value: NaN, se: null, ci95: null, fixed: false };
  if (distinct.length < 2) {
    return { ok: false, n, dof: n - 2, rss: NaN, logKB: nan, logAlpha: nan, covariance: null, converged: false, flags: ['too-few-concentrations'], messages: [`The cooperativity fit needs at least 2 modulator concentrations; ${distinct.length} ${distinct.length === 1 ? 'was' : 'were'} tested.`] };
  }
  const box: [number, number][] = [
    [distinct[0] - 3, distinct[distinct.length - 1] + 3], // log KB
    [-3, 3], // log α
  ];
  const span = box.map(([lo, hi]) => hi - lo);
  const toU = (k: number, v: number) => 1 + (Math.min(Math.max(v, box[k][0]), box[k][1]) - box[k][0]) / span[k];
  const fromU = (k: number, u: number) => box[k][0] + (u - 1) * span[k];
  const model = (q: number[]) => {
    const logKB = fromU(0, q[0]);
    const logAlpha = fromU(1, q[1]);
    return (xi: number) => atcmLogFoldShift(xi, logKB, logAlpha);
  };
  // Starts: log α from the shift at the highest [B] (the ceiling), nudged off 0 where KB would
  // drop out of the model, and also its double; log KB at every tested [B] and half-way points.
  const top = y.filter((_, i) => x[i] === distinct[distinct.length - 1]);
  const topMean = top.reduce((s, v) => s + v, 0) / top.length;
  const a0 = Math.abs(topMean) < 0.1 ? (topMean >= 0 ? 0.3 : -0.3) : topMean;
  const kbStarts = distinct.flatMap((xi, i) => (i + 1 < distinct.length ? [xi, (xi + distinct[i + 1]) / 2] : [xi]));
  let best: ReturnType<typeof leastSquares> | null = null;
  for (const logAlpha of [a0, 2 * a0]) {
    for (const logKB of kbStarts) {
      const r = leastSquares(model, x, y, [toU(0, logKB), toU(1, logAlpha)], { lower: [1, 1], upper: [2, 2], maxIterations: 10 });
      if (!best || r.rss < best.rss) best = r;
    }
  }
  const fit = best!;
  const dof = fit.dof;
  const flags: AtcmFlag[] = [];
  const messages: string[] = [];
  // Residual covariance (named units) plus the control part σ0²·h·hᵀ.
  const residualCov = fit.covariance ? fit.covariance.map((row, i) => row.map((c, j) => c * span[i] * span[j])) : null;
  const named = [fromU(0, fit.params[0]), fromU(1, fit.params[1])];
  const sharedVar = control && control.logSe > 0 && Number.isFinite(control.logSe) ? control.logSe ** 2 : 0;
  const controlDof = control?.dof ?? Infinity;
  let h = [0, 0];
  if (sharedVar > 0 && residualCov) {
    const steps = [1e-6, 1e-6];
    const jac = x.map((xi) => steps.map((hh, k) => {
      const up = named.slice();
      const down = named.slice();
      up[k] += hh;
      down[k] -= hh;
      return (atcmLogFoldShift(xi, up[0], up[1]) - atcmLogFoldShift(xi, down[0], down[1])) / (2 * hh);
    }));
    const jtj = [0, 1].map((i) => [0, 1].map((j) => jac.reduce((s, row) => s + row[i] * row[j], 0)));
    const inv = invertSymmetric(jtj);
    if (inv) {
      const jt1 = [0, 1].map((i) => jac.reduce((s, row) => s + row[i], 0));
      h = [0, 1].map((i) => inv[i][0] * jt1[0] + inv[i][1] * jt1[1]);
    }
  }
  const covariance = residualCov ? residualCov.map((row, i) => row.map((c, j) => c + sharedVar * h[i] * h[j])) : null;
  const estimate = (k: number): Estimate => {
    const value = named[k];
    if (!residualCov || !covariance || dof < 1 || !(covariance[k][k] >= 0)) return { value, se: null, ci95: null, fixed: false };
    const r = residualCov[k][k];
    const c = sharedVar * h[k] * h[k];
    const total = r + c;
    const denominator = (r * r) / dof + (Number.isFinite(controlDof) && controlDof > 0 ? (c * c) / controlDof : 0);
    const t = tCritical95(denominator > 0 ? (total * total) / denominator : total > 0 ? Infinity : dof);
    const se = Math.sqrt(total);
    return { value, se, ci95: [value - t * se, value + t * se], fixed: false };
  };
  const logKB = estimate(0);
  const logAlpha = estimate(1);
  const undetermined = (e: Estimate, k: number) => e.ci95 === null || e.ci95[1] - e.ci95[0] > AMBIGUOUS_CI_WIDTH || e.value <= box[k][0] + 1e-6 || e.value >= box[k][1] - 1e-6;
  if (undetermined(logKB, 0)) {
    flags.push('kb-undetermined');
    messages.push(dof < 1 ? 'log KB is fitted exactly through the points (no degrees of freedom left), so it has no confidence interval.' : 'log KB is not determined by these shifts (they show no curvature against [B], or no shift at all).');
  }
  if (undetermined(logAlpha, 1)) {
    flags.push('alpha-undetermined');
    messages.push(dof < 1 ? 'log α is fitted exactly through the points (no degrees of freedom left), so it has no confidence interval.' : 'log α is not determined by these shifts (the shift has not reached its ceiling within the tested modulator concentrations).');
  }
  if (!fit.converged) {
    flags.push('not-converged');
    messages.push('The cooperativity fit did not converge, so log KB and log α may not be the best fit.');
  }
  return { ok: true, n, dof, rss: fit.rss, logKB, logAlpha, covariance, converged: fit.converged, flags, messages };
}

/**
 * Calls a modulator from its observed effects (thresholds: ModulationThresholds, common practice):
 * 1. the modulator alone gives α ≥ allostericAgonistAlpha → allosteric agonist (it takes
 *    precedence; a potentiating one is noted as an ago-PAM — IUPHAR nomenclature, Christopoulos
 *    et al. 2014; the term as used there is from memory);
 * 2. any FS ≥ pamFoldShift or Emax rise ≥ emaxChange → positive; any FS ≤ namFoldShift or Emax
 *    fall ≥ emaxChange → negative; both → inconclusive (mixed effects);
 * 3. otherwise an ATCM α whose 95 % CI lies wholly above 1 → PAM, wholly below 1 → NAM;
 * 4. otherwise neutral (no modulation detected), or inconclusive when nothing was measured.
 */
export function classifyModulator(
  observed: { foldShifts: readonly number[]; emaxChanges?: readonly (number | null)[]; logAlpha?: Estimate | null; aloneAlpha?: number | null },
  thresholds: Partial<ModulationThresholds> = {},
): ModulatorClassification {
  const th = { ...DEFAULT_MODULATION_THRESHOLDS, ...thresholds };
  const shifts = observed.foldShifts.filter((v) => v > 0 && Number.isFinite(v));
  const changes = (observed.emaxChanges ?? []).filter((v): v is number => v !== null && Number.isFinite(v));
  const maxShift = shifts.length ? Math.max(...shifts) : null;
  const minShift = shifts.length ? Math.min(...shifts) : null;
  const maxChange = changes.length ? Math.max(...changes) : null;
  const minChange = changes.length ? Math.min(...changes) : null;
  const positive: string[] = [];
  const negative: string[] = [];
  if (maxShift !== null && maxShift >= th.pamFoldShift) positive.push(`fold-shift ${fmt(maxShift, th.pamFoldShift)} ≥ ${fmt(th.pamFoldShift)}`);
  if (maxChange !== null && maxChange >= th.emaxChange) positive.push(`Emax +${pct(maxChange)} ≥ +${pct(th.emaxChange)}`);
  if (minShift !== null && minShift <= th.namFoldShift) negative.push(`fold-shift ${fmt(minShift, th.namFoldShift)} ≤ ${fmt(th.namFoldShift)}`);
  if (minChange !== null && minChange <= -th.emaxChange) negative.push(`Emax −${pct(-minChange)} ≤ −${pct(th.emaxChange)}`);

  const alone = observed.aloneAlpha;
  if (alone !== null && alone !== undefined && Number.isFinite(alone) && alone >= th.allostericAgonistAlpha) {
    const ago = positive.length ? `; it also potentiates the agonist (${positive.join(', ')}): an ago-PAM` : '';
    return { call: 'allosteric agonist', rule: `modulator alone α ${fmt(alone, th.allostericAgonistAlpha)} ≥ ${fmt(th.allostericAgonistAlpha)} → allosteric agonist${ago}` };
  }
  if (positive.length && negative.length) {
    return { call: 'inconclusive', rule: `mixed effects (${[...positive, ...negative].join('; ')}) → inconclusive` };
  }
  if (positive.length) return { call: 'positive allosteric modulator', rule: `${positive.join(', ')} → positive allosteric modulator` };
  if (negative.length) return { call: 'negative allosteric modulator', rule: `${negative.join(', ')} → negative allosteric modulator` };
  const ci = observed.logAlpha?.ci95;
  if (ci && ci[0] > 0) return { call: 'positive allosteric modulator', rule: `ATCM α 95 % CI ${fmt(10 ** ci[0])}–${fmt(10 ** ci[1])} above 1 → positive allosteric modulator` };
  if (ci && ci[1] < 0) return { call: 'negative allosteric modulator', rule: `ATCM α 95 % CI ${fmt(10 ** ci[0])}–${fmt(10 ** ci[1])} below 1 → negative allosteric modulator` };
  if (!shifts.length && !changes.length) return { call: 'inconclusive', rule: 'no agonist curve with the modulator was measured → inconclusive' };
  const parts = [maxShift !== null ? `fold-shifts ${fmt(minShift!, th.namFoldShift)}–${fmt(maxShift, th.pamFoldShift)} within (${fmt(th.namFoldShift)}, ${fmt(th.pamFoldShift)})` : null, changes.length ? `Emax changes within ±${pct(th.emaxChange)}` : null].filter(Boolean);
  return { call: 'neutral', rule: `${parts.join(', ')} → no modulation detected` };
}

/** Two decimals (2 significant digits outside 0.01–100), more when that would make a value look equal to its threshold. */
function fmt(v: number, against?: number): string {
  const short = (u: number) => (Math.abs(u) >= 100 || Math.abs(u) < 0.01 ? u.toPrecision(2) : u.toFixed(2));
  return against !== undefined && v !== against && short(v) === short(against) ? String(Number(v.toPrecision(6))) : short(v);
}

function pct(fraction: number): string {
  return `${Number((fraction * 100).toPrecision(6))} %`;
}

/**
 * Analyses one allosteric-modulation run: fold-shifts and Emax changes per modulator
 * concentration, the modulator's own activity, the ATCM fit and the classification.
 */
export function analyseAllostericRun(input: AllostericRunInput, thresholds: Partial<ModulationThresholds> = {}): AllostericResult {
  const messages: string[] = [];
  const excluded: AllostericResult['excluded'] = [];
  const resolved: { curve: ModulatorCurve; ec50: number; emax: number | null; logSe: number | null; logDof: number }[] = [];
  for (const curve of input.curves) {
    const potency = agonistPotency(curve);
    if (!potency.ok) {
      excluded.push({ id: curve.id, modulatorConcM: curve.modulatorConcM, reason: !potency.fit.ok ? 'no agonist curve could be fitted' : 'agonist EC50 outside the tested range (censored)' });
      continue;
    }
    const { ec50, emax, logSe, logDof } = potency;
    if (ec50 === null || !(ec50 > 0) || !(curve.modulatorConcM >= 0)) {
      excluded.push({ id: curve.id, modulatorConcM: curve.modulatorConcM, reason: 'no agonist EC50 or no valid modulator concentration' });
      continue;
    }
    resolved.push({ curve, ec50, emax, logSe, logDof });
  }
  if (excluded.length) messages.push(`${excluded.length} curve${excluded.length === 1 ? '' : 's'} gave no usable agonist EC50 and ${excluded.length === 1 ? 'is' : 'are'} left out.`);

  const controls = resolved.filter((r) => r.curve.modulatorConcM === 0);
  const controlEc50 = controls.length ? 10 ** (controls.reduce((s, r) => s + Math.log10(r.ec50), 0) / controls.length) : null;
  const controlEmaxes = controls.map((r) => r.emax).filter((e): e is number => e !== null && Number.isFinite(e));
  const controlEmax = controlEmaxes.length ? controlEmaxes.reduce((s, e) => s + e, 0) / controlEmaxes.length : null;
  if (controlEc50 === null) messages.push('No control curve (agonist without modulator) with a usable EC50: fold-shifts cannot be computed.');

  const shifts: ShiftPoint[] = controlEc50 === null ? [] : resolved
    .filter((r) => r.curve.modulatorConcM > 0)
    .map((r) => ({
      id: r.curve.id,
      modulatorConcM: r.curve.modulatorConcM,
      logB: Math.log10(r.curve.modulatorConcM),
      ec50M: r.ec50,
      foldShift: controlEc50 / r.ec50,
      emaxChange: r.emax !== null && controlEmax !== null && controlEmax > 0 ? r.emax / controlEmax - 1 : null,
    }));

  let modulatorAlone: AllostericResult['modulatorAlone'] = null;
  if (input.modulatorAlone) {
    let emax = input.modulatorAlone.emax ?? null;
    if (emax === null && input.modulatorAlone.points) {
      const fit = fitFourPL(input.modulatorAlone.points);
      if (fit.ok) emax = fit.params.hillSlope.value >= 0 ? fit.params.top.value : fit.params.bottom.value; // high-concentration asymptote, over basal
      else if (fit.flags.includes('flat')) emax = 0;
    }
    if (emax !== null) {
      const reference = input.referenceEmax ?? controlEmax;
      modulatorAlone = { emax, alpha: reference !== null && reference !== undefined && Math.abs(reference) > 0 ? emax / reference : null };
    }
  }

  // Standard error of the mean control log EC50 (all controls need one), with Welch–Satterthwaite dof.
  let control: { logSe: number; dof: number } | null = null;
  if (controls.length && controls.every((r) => r.logSe !== null && Number.isFinite(r.logSe))) {
    const parts = controls.map((r) => ({ v: r.logSe! ** 2 / controls.length ** 2, dof: r.logDof }));
    const v = parts.reduce((s, q) => s + q.v, 0);
    const denominator = parts.reduce((s, q) => s + (Number.isFinite(q.dof) && q.dof > 0 ? (q.v * q.v) / q.dof : 0), 0);
    control = { logSe: Math.sqrt(v), dof: denominator > 0 ? (v * v) / denominator : Infinity };
  } else if (shifts.length) {
    messages.push('The control EC50 has no standard error, so its uncertainty (shared by every fold-shift) is not included in the cooperativity fit\'s intervals.');
  }
  const atcm = fitAtcm(shifts, control);
  const classification = classifyModulator(
    { foldShifts: shifts.map((s) => s.foldShift), emaxChanges: shifts.map((s) => s.emaxChange), logAlpha: atcm.ok && !atcm.flags.includes('alpha-undetermined') ? atcm.logAlpha : null, aloneAlpha: modulatorAlone?.alpha ?? null },
    thresholds,
  );
  return { ok: controlEc50 !== null && shifts.length > 0, controlEc50M: controlEc50, controlEmax, shifts, excluded, modulatorAlone, atcm, classification, messages };
}
