// SAR table arithmetic (DESIGN §3): aggregation of results per compound × target × parameter
// with censored values, selectivity against the primary target, ligand efficiency and
// lipophilic efficiency. Pure functions over plain numbers.

export type Qualifier = '=' | '<' | '>';

/**
 * Parameters the SAR table can pivot, with where each comes from in a result's values. Affinities
 * (pKi, pKB, pA2) are properties of the compound at the receptor and are pooled over every assay
 * of the target; potency and efficacy in a functional assay depend on the system and readout
 * (receptor reserve, pathway), so they are kept per assay and never pooled across readouts.
 */
export const SAR_PARAMETERS = {
  pKi: { label: 'pKi', unit: '−log M', valueKey: 'pKi', decimals: 2, level: 'target' },
  pEC50: { label: 'pEC50', unit: '−log M', valueKey: 'pEC50', decimals: 2, level: 'assay' },
  pIC50: { label: 'pIC50', unit: '−log M', valueKey: 'pIC50', decimals: 2, level: 'assay' },
  pKB: { label: 'pKB', unit: '−log M', valueKey: 'pKB', decimals: 2, level: 'target' },
  pA2: { label: 'pA2', unit: '−log M', valueKey: 'pA2', decimals: 2, level: 'target' },
  emax: { label: 'Emax', unit: '% of reference', valueKey: 'emax', decimals: 0, level: 'assay' },
  alpha: { label: 'α', unit: 'fraction of reference', valueKey: 'alpha', decimals: 2, level: 'assay' },
  logTauKA: { label: 'log(τ/KA)', unit: 'log M⁻¹', valueKey: 'logTauKA', decimals: 2, level: 'assay' },
} as const;

/** Column id of a value: `t:<target>:<parameter>` for pooled affinities, `a:<assay>:<parameter>` otherwise. */
export function valueColumnId(parameter: SarParameter, targetId: number, assayId: number): string {
  return SAR_PARAMETERS[parameter].level === 'target' ? `t:${targetId}:${parameter}` : `a:${assayId}:${parameter}`;
}
export type SarParameter = keyof typeof SAR_PARAMETERS;
export const SAR_PARAMETER_KEYS = Object.keys(SAR_PARAMETERS) as SarParameter[];

export interface Observation {
  value: number;
  qualifier: Qualifier;
}

export type AggregateFlag = 'censored-excluded' | 'all-censored' | 'conflicting-bounds';

export interface Aggregate {
  /** Mean of the measured values, or the bound when every value is censored (null when the bounds conflict). */
  value: number | null;
  qualifier: Qualifier;
  /** Sample SD of the measured values (n − 1); null below two measured values. */
  sd: number | null;
  /** Values the mean rests on (the measured ones; all of them when every value is censored). */
  n: number;
  /** Censored values left out of the mean. */
  censored: number;
  flag: AggregateFlag | null;
}

/**
 * Aggregates one cell. Means of p-values are geometric means of the potencies (common practice).
 * Censored values (our documented rule):
 *  - some values measured: mean and SD of the measured values only, flagged `censored-excluded`;
 *  - every value censored the same way: that qualifier with the bound every result supports —
 *    for `<` the largest bound, for `>` the smallest — flagged `all-censored`;
 *  - every value censored, both ways: no value, flagged `conflicting-bounds`.
 * Returns null when there is nothing to aggregate.
 */
export function aggregate(observations: readonly Observation[]): Aggregate | null {
  const valid = observations.filter((o) => Number.isFinite(o.value));
  if (valid.length === 0) return null;
  const measured = valid.filter((o) => o.qualifier === '=').map((o) => o.value);
  const censored = valid.length - measured.length;
  if (measured.length > 0) {
    const mean = measured.reduce((s, v) => s + v, 0) / measured.length;
    const sd = measured.length > 1 ? Math.sqrt(measured.reduce((s, v) => s + (v - mean) ** 2, 0) / (measured.length - 1)) : null;
    return { value: mean, qualifier: '=', sd, n: measured.length, censored, flag: censored > 0 ? 'censored-excluded' : null };
  }
  const below = valid.filter((o) => o.qualifier === '<').map((o) => o.value);
  const above = valid.filter((o) => o.qualifier === '>').map((o) => o.value);
  if (below.length && above.length) return { value: null, qualifier: '=', sd: null, n: valid.length, censored, flag: 'conflicting-bounds' };
  if (below.length) return { value: Math.max(...below), qualifier: '<', sd: null, n: below.length, censored: 0, flag: 'all-censored' };
  return { value: Math.min(...above), qualifier: '>', sd: null, n: above.length, censored: 0, flag: 'all-censored' };
}

export interface Margin {
  /** Δp = p(primary) − p(other); fold selectivity is 10^Δ. */
  value: number;
  qualifier: Qualifier;
  fold: number;
}

/**
 * Selectivity of the primary target over another receptor: Δp = p(primary) − p(other) (ΔpKi or
 * ΔpEC50, common practice). A censored side gives a bound: primary measured and the other `<`
 * gives `>`; primary `<` and the other measured gives `<`; primary `>` and the other measured or
 * `<` gives `>`. Null when no bound follows (both sides bounds in the same direction) or a side is missing.
 */
export function selectivityMargin(primary: Aggregate | null, other: Aggregate | null): Margin | null {
  if (!primary || !other || primary.value === null || other.value === null) return null;
  const value = primary.value - other.value;
  const p = primary.qualifier;
  const o = other.qualifier;
  let qualifier: Qualifier | null;
  if (p === '=' && o === '=') qualifier = '=';
  else if ((p === '=' || p === '>') && (o === '<' || o === '=') && !(p === '=' && o === '=')) qualifier = '>';
  else if ((p === '=' || p === '<') && (o === '>' || o === '=')) qualifier = '<';
  else qualifier = null;
  if (qualifier === null) return null;
  return { value, qualifier, fold: 10 ** value };
}

export type WindowState = 'inside' | 'outside' | 'uncertain';

/**
 * Where a margin stands against the selectivity window (log units; 2 = 100-fold). A measured
 * margin strictly below the window is inside; at the window or above it is outside. A `>` bound
 * at or above the window is outside, below it uncertain; a `<` bound at or below the window is
 * inside, above it uncertain.
 */
export function windowState(margin: Margin, windowLog: number): WindowState {
  const eps = 1e-9;
  if (margin.qualifier === '=') return margin.value < windowLog - eps ? 'inside' : 'outside';
  if (margin.qualifier === '>') return margin.value >= windowLog - eps ? 'outside' : 'uncertain';
  return margin.value <= windowLog + eps ? 'inside' : 'uncertain';
}

/** Ligand efficiency LE = 1.37 · pKi / HA in kcal/mol per heavy atom (Hopkins et al. 2004). */
export function ligandEfficiency(pKi: number, heavyAtoms: number): number | null {
  if (!Number.isFinite(pKi) || !(heavyAtoms > 0)) return null;
  return (1.37 * pKi) / heavyAtoms;
}

/** Lipophilic efficiency LipE = pKi − cLogP (Leeson & Springthorpe 2007). */
export function lipophilicEfficiency(pKi: number, clogp: number): number | null {
  if (!Number.isFinite(pKi) || !Number.isFinite(clogp)) return null;
  return pKi - clogp;
}

/** A value with its qualifier carried through a monotone formula (LE, LipE of a censored pKi). */
export function carryQualifier(value: number | null, qualifier: Qualifier): { value: number; qualifier: Qualifier } | null {
  return value === null ? null : { value, qualifier };
}
