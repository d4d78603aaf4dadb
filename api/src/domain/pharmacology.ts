// Derived pharmacological values (DESIGN §3): Cheng–Prusoff, the generalised Cheng–Prusoff
// relation for functional antagonism, intrinsic activity, and per-run normalisation of raw
// responses. Pure functions over plain numbers; concentrations in mol/L.

/** Cheng & Prusoff (1973): Ki = IC50 / (1 + [L]/Kd) for a competitive radioligand displacement. */
export function chengPrusoffKi(ic50: number, radioligandConc: number, radioligandKd: number): number {
  if (!(ic50 > 0) || !(radioligandKd > 0) || !(radioligandConc >= 0)) throw new RangeError('Cheng–Prusoff needs IC50 > 0, Kd > 0 and [L] ≥ 0');
  return ic50 / (1 + radioligandConc / radioligandKd);
}

/** The same on the p-scale: pKi = pIC50 + log10(1 + [L]/Kd). */
export function pKiFromPIC50(pIC50: number, radioligandConc: number, radioligandKd: number): number {
  return pIC50 + Math.log10(1 + radioligandConc / radioligandKd);
}

/**
 * Leff & Dougall (1993) generalised Cheng–Prusoff relation for a functional antagonist tested
 * against an agonist at concentration [A] with its EC50 and Hill slope n:
 * KB = IC50 / ((2 + ([A]/EC50)^n)^(1/n) − 1). For n = 1 it reduces to IC50 / (1 + [A]/EC50).
 */
export function leffDougallKB(ic50: number, agonistConc: number, agonistEc50: number, agonistHill: number): number {
  if (!(ic50 > 0) || !(agonistEc50 > 0) || !(agonistConc >= 0) || !(agonistHill > 0)) throw new RangeError('the generalised Cheng–Prusoff relation needs IC50 > 0, EC50 > 0, [A] ≥ 0 and n > 0');
  return ic50 / (Math.pow(2 + Math.pow(agonistConc / agonistEc50, agonistHill), 1 / agonistHill) - 1);
}

export function pKBFromPIC50(pIC50: number, agonistConc: number, agonistEc50: number, agonistHill: number): number {
  return pIC50 + Math.log10(Math.pow(2 + Math.pow(agonistConc / agonistEc50, agonistHill), 1 / agonistHill) - 1);
}

/**
 * Intrinsic activity α = Emax(test) / Emax(reference full agonist), both measured over basal in
 * the same run (common practice). Responses already normalised over basal have basal = 0.
 */
export function intrinsicActivity(emaxTest: number, emaxReference: number, basal = 0): number {
  const span = emaxReference - basal;
  if (!(Math.abs(span) > 0)) throw new RangeError('the reference agonist shows no response over basal: α is undefined');
  return (emaxTest - basal) / span;
}

export type NormalisationMethod = 'percent-of-reference' | 'percent-inhibition' | 'percent-specific-binding';

export interface ControlMeans {
  basal: number | null;
  max: number | null;
  blank: number | null;
}

export interface Normalisation {
  method: NormalisationMethod;
  /** Raw signal that maps to 0 %. */
  zero: number;
  /** Raw signal that maps to 100 %. */
  hundred: number;
  /** Where each came from, for the run page. */
  zeroFrom: string;
  hundredFrom: string;
}

export class NormalisationError extends Error {}

export function mean(values: readonly number[]): number | null {
  return values.length ? values.reduce((a, b) => a + b, 0) / values.length : null;
}

/**
 * How a run's raw responses become percentages (common practice):
 * - agonist or modulator mode: % of the reference full agonist's response over basal —
 *   0 % at the BASAL controls (else the reference curve's bottom), 100 % at the MAX controls
 *   (else the reference curve's fitted top);
 * - antagonist mode: % inhibition of the agonist's response — 0 % at MAX (agonist alone),
 *   100 % at BASAL;
 * - binding: % specific binding — 0 % at BLANK (non-specific binding), 100 % at BASAL (total).
 */
export function chooseNormalisation(
  kind: 'binding' | 'functional-agonist' | 'functional-antagonist' | 'allosteric-modulation',
  controls: ControlMeans,
  referenceFit: { bottom: number; top: number } | null,
): Normalisation {
  if (kind === 'binding') {
    if (controls.basal === null || controls.blank === null) throw new NormalisationError('a binding run needs BASAL (total binding) and BLANK (non-specific binding) wells to compute % specific binding');
    if (controls.basal === controls.blank) throw new NormalisationError('total binding (BASAL) equals non-specific binding (BLANK): no specific binding window');
    return { method: 'percent-specific-binding', zero: controls.blank, hundred: controls.basal, zeroFrom: 'mean of BLANK wells (non-specific binding)', hundredFrom: 'mean of BASAL wells (total binding)' };
  }
  if (kind === 'functional-antagonist') {
    if (controls.basal === null || controls.max === null) throw new NormalisationError('an antagonist-mode run needs BASAL and MAX (agonist alone) wells to compute % inhibition');
    if (controls.basal === controls.max) throw new NormalisationError('the agonist alone (MAX) gives the same signal as BASAL: no window to inhibit');
    return { method: 'percent-inhibition', zero: controls.max, hundred: controls.basal, zeroFrom: 'mean of MAX wells (agonist alone)', hundredFrom: 'mean of BASAL wells' };
  }
  const zero = controls.basal ?? referenceFit?.bottom ?? null;
  const hundred = controls.max ?? referenceFit?.top ?? null;
  if (zero === null || hundred === null) throw new NormalisationError('an agonist-mode run needs BASAL and MAX wells, or a curve of the assay\'s reference full agonist, to express responses as % of the reference');
  if (zero === hundred) throw new NormalisationError('the reference maximum equals basal: no window to normalise to');
  return {
    method: 'percent-of-reference',
    zero,
    hundred,
    zeroFrom: controls.basal !== null ? 'mean of BASAL wells' : 'bottom of the reference agonist curve',
    hundredFrom: controls.max !== null ? 'mean of MAX wells' : 'top of the reference agonist curve',
  };
}

export function normalise(response: number, n: Normalisation): number {
  return ((response - n.zero) / (n.hundred - n.zero)) * 100;
}

/**
 * Operational model of agonism (Black & Leff 1983), slope factor n (Black et al. 1985):
 * E = Em·τⁿ[A]ⁿ / (([A] + KA)ⁿ + τⁿ[A]ⁿ). For n = 1, EC50 = KA/(1+τ) and Emax = Em·τ/(1+τ).
 */
export function operationalModel(conc: number, p: { em: number; tau: number; ka: number; n?: number }): number {
  const n = p.n ?? 1;
  if (conc <= 0 || p.tau <= 0) return 0;
  const num = Math.pow(p.tau * conc, n);
  return (p.em * num) / (Math.pow(conc + p.ka, n) + num);
}

/** Receptor occupancy by a competitive ligand at concentration c with dissociation constant K (mass action, Hill slope 1). */
export function occupancy(conc: number, k: number): number {
  return conc / (conc + k);
}
