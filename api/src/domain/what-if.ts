// "What if": the response to an agonist A in the presence of fixed concentrations of a second
// compound B acting at the same site, both described by the operational model with shared Em and
// slope n = 1 (Black & Leff 1983). With a = [A]/KA and b = [B]/KB, competitive occupancy gives
// pA = a/(1 + a + b) and pB = b/(1 + a + b); the stimuli add, S = τA·pA + τB·pB, and the
// hyperbolic transducer of the operational model gives E = Em·S/(1 + S), i.e.
//
//   E = Em·(τA·a + τB·b) / (1 + a + b + τA·a + τB·b)
//
// (the two-agonist form of the operational model as used by Leff and co-workers in the early
// 1990s — from memory, citation not checked; the derivation above is what the code relies on).
//
// Consequences the tests check: B = 0 gives A's own curve; [A] = 0 gives B's own curve, so at
// saturating [B] the baseline is B's own maximum Em·τB/(1 + τB); as [A] → ∞ the response returns
// to A's maximum Em·τA/(1 + τA) whatever [B] (the interaction is surmountable); half-way between
// baseline and maximum lies at [A] = KA·(1 + b·(1 + τB))/(1 + τA). A partial agonist therefore
// lowers the response to a given, near-maximal concentration of a full agonist toward its own
// maximum — it acts as an antagonist of the more efficacious agonist (common knowledge in
// receptor pharmacology) — but it does not lower the full agonist's asymptotic maximum.

export interface AgonistParams {
  /** log10 τ (operational efficacy). */
  logTau: number;
  /** log10 KA (M, equilibrium dissociation constant). */
  logKA: number;
}

export interface WhatIfOptions {
  /** System maximum, shared by both compounds. */
  em: number;
  /** Molar concentrations of B to simulate (0 gives A alone). */
  bConcsM: readonly number[];
  /** log10 [A] range of each curve; by default 3 log units either side of the curves' midpoints. */
  logConcRange?: [number, number];
  /** Spacing of the log [A] grid (default 0.1). */
  step?: number;
}

export interface WhatIfCurve {
  bConcM: number;
  points: { logConc: number; response: number }[];
  /** Response at [A] = 0: B's own response. */
  baseline: number;
  /** Response as [A] → ∞: A's maximum, Em·τA/(1 + τA). */
  maximum: number;
  /** log10 [A] half-way between baseline and maximum: log(KA·(1 + b(1 + τB))/(1 + τA)). */
  logMidpoint: number;
}

/** Response to agonist A at [A] together with compound B at [B] (n = 1; see the file header). */
export function twoAgonistResponse(aConcM: number, bConcM: number, a: AgonistParams, b: AgonistParams, em: number): number {
  const ta = 10 ** a.logTau;
  const tb = 10 ** b.logTau;
  const ra = aConcM > 0 ? aConcM / 10 ** a.logKA : 0;
  const rb = bConcM > 0 ? bConcM / 10 ** b.logKA : 0;
  if (!Number.isFinite(ra)) return (em * ta) / (1 + ta);
  if (!Number.isFinite(rb)) return (em * tb) / (1 + tb);
  const s = ta * ra + tb * rb;
  return (em * s) / (1 + ra + rb + s);
}

/**
 * Curves of the response to A over a log [A] grid at each [B] (A's and B's operational
 * parameters, e.g. from fitOperationalModel; shared Em, n = 1).
 */
export function simulateAgonistWithPartner(a: AgonistParams, b: AgonistParams, opts: WhatIfOptions): { curves: WhatIfCurve[] } {
  if (!(opts.em > 0)) throw new RangeError('the what-if simulation needs a positive Em');
  const step = opts.step ?? 0.1;
  if (!(step > 0)) throw new RangeError('the log-concentration step must be positive');
  const ta = 10 ** a.logTau;
  const tb = 10 ** b.logTau;
  const midpoint = (bConc: number) => a.logKA + Math.log10(1 + (bConc / 10 ** b.logKA) * (1 + tb)) - Math.log10(1 + ta);
  const mids = opts.bConcsM.map(midpoint);
  const [lo, hi] = opts.logConcRange ?? [Math.min(...mids, midpoint(0)) - 3, Math.max(...mids, midpoint(0)) + 3];
  const count = Math.floor((hi - lo) / step + 1e-9) + 1;
  const grid = Array.from({ length: count }, (_, i) => Math.round((lo + i * step) * 1e10) / 1e10);
  const curves = opts.bConcsM.map((bConc) => ({
    bConcM: bConc,
    points: grid.map((logConc) => ({ logConc, response: twoAgonistResponse(10 ** logConc, bConc, a, b, opts.em) })),
    baseline: twoAgonistResponse(0, bConc, a, b, opts.em),
    maximum: (opts.em * ta) / (1 + ta),
    logMidpoint: midpoint(bConc),
  }));
  return { curves };
}
