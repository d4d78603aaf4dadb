// From a fitted curve to the values a result reports (DESIGN §3): potency on the p-scale with
// its qualifier and uncertainty, Emax, intrinsic activity, pKi (Cheng–Prusoff) and pKB
// (generalised Cheng–Prusoff). Pure.
import type { ResultValue, ResultValues } from '../entities/assay.entity.js';
import type { AssayKind } from '../entities/assay.entity.js';
import type { Estimate, FixedParams, FourPlFit } from './curve-fit.js';
import { pKBFromPIC50, pKiFromPIC50 } from './pharmacology.js';

export interface AssayConstants {
  radioligandConcM: number | null;
  radioligandKdM: number | null;
  agonistConcM: number | null;
  agonistEc50M: number | null;
  agonistHill: number | null;
}

const P_UNIT = '-log M';

function flip(q: '=' | '<' | '>'): '=' | '<' | '>' {
  return q === '<' ? '>' : q === '>' ? '<' : '=';
}

function plain(e: Estimate, unit: string): ResultValue {
  return { value: e.value, qualifier: '=', unit, se: e.se, ci95: e.ci95 };
}

/** The response the curve reaches at high concentration (Top for a rising 4PL, Bottom for a falling one). */
export function highConcentrationAsymptote(fit: FourPlFit): Estimate {
  return fit.params.hillSlope.value >= 0 ? fit.params.top : fit.params.bottom;
}

/** Potency on the p-scale: pX = −log10 EC50, censored as the fit's potency is. */
export function pPotency(fit: FourPlFit): ResultValue {
  const q = flip(fit.potency.qualifier);
  const e = fit.params.logEC50;
  if (q !== '=') return { value: -fit.potency.logValue, qualifier: q, unit: P_UNIT, se: null, ci95: null };
  return { value: -e.value, qualifier: '=', unit: P_UNIT, se: e.se, ci95: e.ci95 ? [-e.ci95[1], -e.ci95[0]] : null };
}

function shifted(v: ResultValue, by: number): ResultValue {
  return { ...v, value: v.value + by, ci95: v.ci95 ? [v.ci95[0] + by, v.ci95[1] + by] : null };
}

/**
 * Intrinsic activity α = Emax / Emax(reference) with its uncertainty scaled alike; null without
 * a reference response (common practice).
 */
export function alphaValue(emax: Pick<ResultValue, 'value' | 'se' | 'ci95'>, referenceEmax: number | null): ResultValue | null {
  if (referenceEmax === null || !(Math.abs(referenceEmax) > 0)) return null;
  return {
    value: emax.value / referenceEmax,
    qualifier: '=',
    unit: '',
    se: emax.se == null ? null : emax.se / Math.abs(referenceEmax),
    ci95: emax.ci95 ? [emax.ci95[0] / referenceEmax, emax.ci95[1] / referenceEmax] : null,
  };
}

/** The response the curve starts from at low concentration (Bottom for a rising 4PL, Top for a falling one). */
export function lowConcentrationAsymptote(fit: FourPlFit): Estimate {
  return fit.params.hillSlope.value >= 0 ? fit.params.bottom : fit.params.top;
}

/**
 * The values of one curve. `referenceEmax` is the reference full agonist's Emax (over basal,
 * in the same normalised units) in the same run, or null when the run has none.
 */
export function deriveResultValues(kind: AssayKind, fit: FourPlFit, assay: AssayConstants, referenceEmax: number | null): ResultValues {
  const values: ResultValues = {};
  if (!fit.ok && !fit.flags.includes('flat')) return values; // too few points: nothing to report
  const potency = pPotency(fit);
  if (kind === 'functional-agonist' || kind === 'allosteric-modulation') {
    values.pEC50 = potency;
    if (fit.ok) {
      const emax = highConcentrationAsymptote(fit);
      values.emax = plain(emax, '%');
      const alpha = alphaValue(emax, referenceEmax);
      if (alpha) values.alpha = alpha;
    }
  } else {
    values.pIC50 = potency;
    // Antagonist mode: the maximal inhibition. Binding has none worth a value of its own (Top and Bottom are kept).
    if (fit.ok && kind === 'functional-antagonist') values.emax = plain(highConcentrationAsymptote(fit), '%');
    if (kind === 'binding' && assay.radioligandConcM !== null && assay.radioligandKdM !== null) {
      values.pKi = shifted(potency, pKiFromPIC50(0, assay.radioligandConcM, assay.radioligandKdM));
    }
    if (kind === 'functional-antagonist' && assay.agonistConcM !== null && assay.agonistEc50M !== null) {
      values.pKB = shifted(potency, pKBFromPIC50(0, assay.agonistConcM, assay.agonistEc50M, assay.agonistHill ?? 1));
    }
  }
  if (fit.ok) {
    values.hillSlope = plain(fit.params.hillSlope, '');
    values.top = plain(fit.params.top, '%');
    values.bottom = plain(fit.params.bottom, '%');
  }
  return values;
}

/**
 * Plateaus to hold at their control level when a first fit shows the curve does not reach them
 * (common practice with normalised data): binding and antagonist-mode curves run between 0 and
 * 100 % by construction; a rising agonist-mode curve starts at basal (0 %). The top of an agonist
 * curve is never fixed: a partial agonist's maximum is what is being measured.
 */
export function plateauConstraints(kind: AssayKind, fit: FourPlFit): FixedParams {
  const fixed: FixedParams = {};
  if (!fit.ok) return fixed;
  if (kind === 'binding' || kind === 'functional-antagonist') {
    if (fit.flags.includes('incomplete-top')) fixed.top = 100;
    if (fit.flags.includes('incomplete-bottom')) fixed.bottom = 0;
  } else if (fit.params.hillSlope.value > 0 && fit.flags.includes('incomplete-bottom')) {
    fixed.bottom = 0;
  }
  return fixed;
}

export function describeConstraints(fixed: FixedParams): string {
  const parts = [fixed.top !== undefined ? `Top at ${fixed.top} %` : null, fixed.bottom !== undefined ? `Bottom at ${fixed.bottom} %` : null].filter(Boolean);
  return `The curve does not reach its plateau within the tested range, so ${parts.join(' and ')} (the control level) was held fixed; clear the fixed value and refit to fit it freely.`;
}
