// Small pure rules the mechanism services apply to stored values (DESIGN §3: computations live in
// the domain layer): the basal change of an agonist-mode curve in a constitutively active system,
// and the summary of several log(τ/KA) values of one compound in one assay for the bias factor.
import { tCritical95, type CurvePoint, type FourPlFit } from './curve-fit.js';
import type { TransductionValue } from './operational-model.js';

/**
 * Basal change of an agonist-mode curve in a constitutively active system, in % of the reference
 * window (normalised 0 = the BASAL wells, which carry the constitutive signal): the fitted
 * high-concentration asymptote when the curve fits (negative for an inverse agonist), else — a
 * flat curve — the mean response at the two highest tested concentrations. Null without points.
 */
export function basalChangeOf(fit: FourPlFit | null, points: CurvePoint[]): number | null {
  if (fit && fit.ok) return fit.params.hillSlope.value >= 0 ? fit.params.top.value : fit.params.bottom.value;
  const used = points.filter((p) => !p.excluded);
  if (!used.length) return null;
  const top = [...new Set(used.map((p) => p.logConc))].sort((a, b) => b - a).slice(0, 2);
  const ys = used.filter((p) => top.includes(p.logConc)).map((p) => p.response);
  return ys.reduce((s, v) => s + v, 0) / ys.length;
}

/** Mean log(τ/KA) over measured ('=') values: one result → its own SE; several → SD/√n on n − 1 dof. */
export function summariseTransduction(values: readonly { value: number; qualifier: '=' | '<' | '>'; se?: number | null; ci95?: [number, number] | null }[]): (TransductionValue & { n: number; ci95: [number, number] | null }) | null {
  const used = values.filter((v) => v.qualifier === '=' && Number.isFinite(v.value));
  if (!used.length) return null;
  if (used.length === 1) {
    const v = used[0];
    return { value: v.value, se: v.se ?? null, dof: null, n: 1, ci95: v.ci95 ?? null };
  }
  const n = used.length;
  const mean = used.reduce((s, v) => s + v.value, 0) / n;
  const sd = Math.sqrt(used.reduce((s, v) => s + (v.value - mean) ** 2, 0) / (n - 1));
  const se = sd / Math.sqrt(n);
  const t = tCritical95(n - 1);
  return { value: mean, se, dof: n - 1, n, ci95: [mean - t * se, mean + t * se] };
}
