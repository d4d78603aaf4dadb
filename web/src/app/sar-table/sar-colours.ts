import type { SarParameter } from './sar-api';

/**
 * Ligandry's sequential scale for value cells: one hue (a blue-green, 195°) whose OKLCH lightness
 * falls linearly from 0.97 to 0.45 as the value rises. OKLCH lightness is perceptually uniform by
 * construction, so equal steps in value read as equal steps in colour, and the scale stays
 * readable in greyscale. Text turns light on the darker half.
 */
export const SCALE = { hue: 195, lightFrom: 0.97, lightTo: 0.45, chromaFrom: 0.02, chromaTo: 0.11 } as const;

/** Value range mapped onto the scale for each parameter (values outside are clamped). */
export const SCALE_DOMAIN: Record<SarParameter, [number, number]> = {
  pKi: [5, 10],
  pEC50: [5, 10],
  pIC50: [5, 10],
  pKB: [5, 10],
  pA2: [5, 10],
  logTauKA: [5, 10],
  emax: [0, 110],
  alpha: [0, 1.1],
};

/** Position 0…1 of a value on its parameter's scale. */
export function scalePosition(parameter: SarParameter, value: number): number {
  const [lo, hi] = SCALE_DOMAIN[parameter];
  return Math.min(1, Math.max(0, (value - lo) / (hi - lo)));
}

/** Background and text colour for a position on the scale. */
export function scaleColours(t: number): { background: string; color: string } {
  const l = SCALE.lightFrom + (SCALE.lightTo - SCALE.lightFrom) * t;
  const c = SCALE.chromaFrom + (SCALE.chromaTo - SCALE.chromaFrom) * t;
  return { background: `oklch(${l.toFixed(3)} ${c.toFixed(3)} ${SCALE.hue})`, color: l < 0.66 ? '#ffffff' : '#172122' };
}

/** CSS gradient of the whole scale, for the legend. */
export function scaleGradient(): string {
  const stops = [0, 0.25, 0.5, 0.75, 1].map((t) => `${scaleColours(t).background} ${t * 100}%`);
  return `linear-gradient(to right, ${stops.join(', ')})`;
}
