// Words for the assay pages: kinds, statuses, fit flags, concentrations and normalisation.
import type { Assay, AssayKind, FitFlag, Measurement, Normalisation, Result, ResultStatus, ValueKey } from './assay-api';

export const KIND_LABELS: Record<AssayKind, string> = {
  binding: 'Binding (radioligand displacement)',
  'functional-agonist': 'Functional, agonist mode',
  'functional-antagonist': 'Functional, antagonist mode',
  'allosteric-modulation': 'Allosteric modulation',
};

export const KIND_SHORT: Record<AssayKind, string> = {
  binding: 'Binding',
  'functional-agonist': 'Agonist mode',
  'functional-antagonist': 'Antagonist mode',
  'allosteric-modulation': 'Allosteric modulation',
};

export const KIND_HINTS: Record<AssayKind, string> = {
  binding: 'Test compounds displace a radioligand; pKi follows from pIC50 by Cheng–Prusoff, which needs the radioligand concentration and its Kd.',
  'functional-agonist': 'Test compounds are given alone; pEC50 and Emax are read from the curve, and α against the reference full agonist run on the same plate.',
  'functional-antagonist': 'Test compounds inhibit a fixed agonist concentration; pKB follows from pIC50 by the generalised Cheng–Prusoff relation, which needs the agonist concentration, EC50 and Hill slope.',
  'allosteric-modulation': 'Test compounds are given with a fixed agonist concentration; pEC50, Emax and α are read against the reference agonist.',
};

export const STATUS_LABELS: Record<ResultStatus, string> = {
  draft: 'Draft',
  submitted: 'Submitted',
  approved: 'Approved',
  rejected: 'Rejected',
};

export const FLAG_LABELS: Record<FitFlag, string> = {
  'too-few-points': 'Too few points',
  flat: 'No significant curve',
  'incomplete-top': 'Top plateau not reached',
  'incomplete-bottom': 'Bottom plateau not reached',
  ambiguous: 'Potency poorly defined',
  'above-range': 'Potency beyond the highest concentration',
  'below-range': 'Potency below the lowest concentration',
  'not-converged': 'Fit did not converge',
};

export const VALUE_LABELS: Record<ValueKey, string> = {
  pEC50: 'pEC50',
  pIC50: 'pIC50',
  pKi: 'pKi',
  pKB: 'pKB',
  emax: 'Emax',
  alpha: 'α (intrinsic activity)',
  hillSlope: 'Hill slope',
  top: 'Top',
  bottom: 'Bottom',
  logTau: 'log τ (efficacy)',
  logKA: 'log KA (affinity)',
  logTauKA: 'log(τ/KA) (transduction)',
  pA2: 'pA2 (Schild)',
  schildSlope: 'Schild slope',
  foldShift: 'Fold-shift of agonist EC50',
  emaxChange: 'Agonist Emax change',
  logKB: 'log KB (modulator affinity)',
  logCooperativity: 'log α (cooperativity)',
  basalChange: 'Basal change',
};

/** What the reference compound is called for each kind of assay. */
export function referenceRole(kind: AssayKind): string {
  return kind === 'functional-antagonist' ? 'Agonist' : kind === 'binding' ? 'Reference compound' : 'Reference full agonist';
}

/** mol/L → nM, rounded to six significant digits (3e-9 → 3, not 2.9999999999999996). */
export function toNanomolar(molar: number | null | undefined): number | null {
  return molar === null || molar === undefined ? null : Number((molar * 1e9).toPrecision(6));
}

/** nM → mol/L without binary noise (10 nM → 1e-8 exactly). */
export function fromNanomolar(nanomolar: number | null | undefined): number | null {
  return nanomolar === null || nanomolar === undefined || Number.isNaN(nanomolar) ? null : Number(`${nanomolar}e-9`);
}

const UNITS: readonly [number, string][] = [
  [1e-3, 'mM'],
  [1e-6, 'µM'],
  [1e-9, 'nM'],
  [1e-12, 'pM'],
];

/** A molar concentration in the unit that reads best: 3e-8 → "30 nM", 1e-5 → "10 µM". */
export function formatMolar(molar: number | null | undefined): string {
  if (molar === null || molar === undefined || !Number.isFinite(molar)) return '—';
  if (molar === 0) return '0';
  const [factor, unit] = UNITS.find(([f]) => Math.abs(molar) >= f * 0.9995) ?? UNITS[UNITS.length - 1];
  const value = molar / factor;
  const digits = Math.abs(value) >= 100 ? 0 : Math.abs(value) >= 10 ? 1 : 2;
  return `${Number(value.toFixed(digits))} ${unit}`;
}

/** The run's normalisation in one sentence a pharmacologist can check. */
export function describeNormalisation(n: Normalisation, assay: Assay): string {
  const raw = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(0) : v.toPrecision(3));
  const scale = `0 % = ${n.zeroFrom}, raw ${raw(n.zero)}; 100 % = ${n.hundredFrom}, raw ${raw(n.hundred)}`;
  switch (n.method) {
    case 'percent-of-reference': {
      const ref = assay.referenceCompound;
      const which = ref ? ` Reference agonist: ${ref.registryNumber}${ref.name ? `, ${ref.name}` : ''}.` : '';
      return `Responses are % of the reference agonist's response over basal: ${scale}.${which}`;
    }
    case 'percent-inhibition':
      return `Responses are % inhibition of the agonist's response: ${scale}.`;
    case 'percent-specific-binding':
      return `Responses are % specific binding of the radioligand: ${scale}. Displacement makes the curves fall.`;
  }
}

/** The y axis title for a kind of assay. */
export function responseAxisLabel(kind: AssayKind): string {
  if (kind === 'binding') return 'Specific binding (%)';
  if (kind === 'functional-antagonist') return 'Inhibition (%)';
  return 'Response (% of reference)';
}

/** The measurements behind one result's curve (its batch and condition, not the controls). */
export function pointsOf(result: Result, measurements: readonly Measurement[]): Measurement[] {
  return measurements.filter((m) => m.control === null && m.batchId === result.batch.id && (m.condition ?? null) === (result.condition ?? null));
}

/** The headline values in a few words: "pKi 8.12 · pIC50 7.82" or "pEC50 < 5.00 · Emax 12 %". */
export function summariseValues(values: Result['values']): string {
  const order: ValueKey[] = ['pKi', 'pKB', 'pEC50', 'pIC50', 'emax', 'alpha'];
  const parts = order
    .filter((k) => values[k])
    .map((k) => {
      const v = values[k]!;
      const q = v.qualifier === '=' ? '' : `${v.qualifier} `;
      const text = k === 'emax' ? `${v.value.toFixed(0)} %` : v.value.toFixed(2);
      return `${k === 'emax' ? 'Emax' : k === 'alpha' ? 'α' : k} ${q}${text.replace(/^-/, '−')}`;
    });
  return parts.length ? parts.join(' · ') : 'no value';
}
