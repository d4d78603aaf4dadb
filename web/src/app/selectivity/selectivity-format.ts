import type { Qualifier } from '../sar-table/sar-api';
import type { Score } from './selectivity-api';

/**
 * Ligandry's diverging scale for margins, centred on the project's selectivity window: inside the
 * window (less selective) in a warm ochre-red (hue 35°), outside it in the blue-green of the value
 * scale (hue 195°); OKLCH lightness falls linearly with the distance from the window, up to 3 log units.
 */
export function marginColours(value: number, windowLog: number): { background: string; color: string } {
  const t = Math.max(-1, Math.min(1, (value - windowLog) / 3));
  const a = Math.abs(t);
  const l = 0.97 - 0.4 * a;
  const c = 0.02 + 0.11 * a;
  const hue = t < 0 ? 35 : 195;
  return { background: `oklch(${l.toFixed(3)} ${c.toFixed(3)} ${hue})`, color: l < 0.66 ? '#ffffff' : '#172122' };
}

export function marginGradient(): string {
  const stops = [-1, -0.5, 0, 0.5, 1].map((t, i) => `${marginColours(t * 3, 0).background} ${i * 25}%`);
  return `linear-gradient(to right, ${stops.join(', ')})`;
}

export function bound(value: number | null | undefined, qualifier: Qualifier | null | undefined, decimals = 2): string {
  if (value === null || value === undefined) return '–';
  return `${qualifier && qualifier !== '=' ? `${qualifier} ` : ''}${value.toFixed(decimals)}`;
}

export function fold(log: number): string {
  const f = 10 ** log;
  return f >= 10 ? `${Math.round(f).toLocaleString('en-GB')}×` : `${f.toFixed(f < 1 ? 2 : 1)}×`;
}

/** "1 × 8.50 + 1 × 2.00 + 0.5 × 5.00 = 13.00", or why there is no score. */
export function scoreExplained(s: Score): string {
  if (s.score === null) return `Not ranked: ${s.excluded}`;
  const parts = s.terms.filter((t) => t.weight !== 0).map((t) => `${t.weight} × ${t.label} ${bound(t.value, t.qualifier)}`);
  return `${parts.join(' + ')} = ${s.score.toFixed(2)}`;
}
