import type { Qualifier, SarCell, SarMargin, SarParameter } from './sar-api';

/** Decimals shown per parameter; the API's exports round the same way (api/src/domain/sar-export.ts). */
export const DECIMALS: Record<SarParameter, number> = { pKi: 2, pEC50: 2, pIC50: 2, pKB: 2, pA2: 2, logTauKA: 2, emax: 0, alpha: 2 };

export function qualified(value: number, qualifier: Qualifier, decimals: number): string {
  const text = value.toFixed(decimals);
  return qualifier === '=' ? text : `${qualifier} ${text}`;
}

/** "7.30 ± 0.30 (3)", "< 5.00 (2)", or "conflicting bounds". */
export function cellText(parameter: SarParameter, cell: SarCell): string {
  if (cell.value === null) return 'conflicting bounds';
  const d = DECIMALS[parameter];
  const sd = cell.sd !== null ? ` ± ${cell.sd.toFixed(d)}` : '';
  return `${qualified(cell.value, cell.qualifier, d)}${sd} (${cell.n})`;
}

/** What a cell's flags mean, in words. */
export function cellNotes(cell: SarCell): string[] {
  const notes: string[] = [];
  if (cell.flag === 'censored-excluded') notes.push(`${cell.censored} censored value${cell.censored === 1 ? '' : 's'} (< or >) left out of the mean`);
  if (cell.flag === 'all-censored') notes.push('every value is a bound: the bound all results support is shown');
  if (cell.flag === 'conflicting-bounds') notes.push('only bounds in both directions: no value');
  if (cell.submitted) notes.push(`${cell.submitted} submitted, not yet approved`);
  return notes;
}

export function foldText(fold: number): string {
  if (fold >= 100) return `${Math.round(fold).toLocaleString('en-GB')}×`;
  if (fold >= 10) return `${fold.toFixed(0)}×`;
  return `${fold.toFixed(fold < 1 ? 2 : 1)}×`;
}

export function marginText(m: SarMargin): string {
  return `${qualified(m.value, m.qualifier, 2)} (${m.qualifier === '=' ? '' : m.qualifier}${foldText(m.fold)})`;
}

export const WINDOW_WORDS: Record<SarMargin['window'], string> = {
  inside: 'inside the selectivity window',
  outside: 'outside the selectivity window',
  uncertain: 'may be inside the selectivity window (a bound)',
};
