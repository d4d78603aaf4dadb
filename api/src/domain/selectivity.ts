// Project-level ranking and decision review (DESIGN §3, §4): a score a lead configures from
// weighted terms, broken down so it can be explained, and the test that tells whether later
// results changed the picture a decision rested on. Pure functions over plain numbers.
import type { Qualifier } from './sar.js';

/** Calls that count as agonism, for receptors where agonism is unwanted on its own. */
export const AGONIST_CALLS: readonly string[] = ['full agonist', 'partial agonist', 'allosteric agonist'];

export interface RankingConfig {
  /** Weight per log unit of primary potency (pKi at the primary target). */
  potency: number;
  /** Weight per log unit of the worst margin over an anti-target. */
  margin: number;
  /** Weight per unit of LipE at the primary target. */
  lipe: number;
  /** Calls accepted at the primary target; empty: no call required. */
  requiredCalls: string[];
}

/** Defaults (our choice, editable per project): potency and selectivity count alike, LipE half. */
export const DEFAULT_RANKING: RankingConfig = { potency: 1, margin: 1, lipe: 0.5, requiredCalls: [] };

export interface Bounded {
  value: number;
  qualifier: Qualifier;
}

export interface RankingInput {
  potency: Bounded | null;
  worstMargin: Bounded | null;
  lipe: Bounded | null;
  primaryCall: string | null;
}

export interface ScoreTerm {
  term: 'potency' | 'margin' | 'lipe';
  label: string;
  value: number | null;
  qualifier: Qualifier | null;
  weight: number;
  contribution: number | null;
  note: string | null;
}

export interface Score {
  /** Σ weight × value over the weighted terms; null when the compound cannot be ranked. */
  score: number | null;
  terms: ScoreTerm[];
  /** Why there is no score (a weighted term without a value, or the call required at the primary target). */
  excluded: string | null;
}

const LABELS = { potency: 'primary pKi', margin: 'worst margin (log units)', lipe: 'LipE' } as const;

/**
 * The score: Σ weight × value over primary potency, worst margin and LipE. A censored value counts
 * at its bound, with a note saying so. A term with weight 0 is shown but not needed; a weighted
 * term without a value, or a call at the primary target outside the required ones, leaves the
 * compound unranked with the reason.
 */
export function rankScore(input: RankingInput, config: RankingConfig = DEFAULT_RANKING): Score {
  const terms: ScoreTerm[] = (['potency', 'margin', 'lipe'] as const).map((term) => {
    const v = term === 'potency' ? input.potency : term === 'margin' ? input.worstMargin : input.lipe;
    const weight = config[term];
    const note = v && v.qualifier !== '=' ? `a bound (${v.qualifier} ${v.value.toFixed(2)}) counted at its value` : null;
    return { term, label: LABELS[term], value: v?.value ?? null, qualifier: v?.qualifier ?? null, weight, contribution: v ? weight * v.value : null, note };
  });
  if (config.requiredCalls.length && !(input.primaryCall && config.requiredCalls.includes(input.primaryCall))) {
    return { score: null, terms, excluded: `the call at the primary target is ${input.primaryCall ?? 'missing'}, not ${config.requiredCalls.join(' or ')}` };
  }
  const missing = terms.filter((t) => t.weight !== 0 && t.value === null);
  if (missing.length) return { score: null, terms, excluded: `no ${missing.map((t) => t.label).join(', no ')}` };
  const score = terms.reduce((sum, t) => sum + (t.weight === 0 ? 0 : t.contribution!), 0);
  return { score, terms, excluded: null };
}

/** What a decision rested on, kept with it. */
export interface DecisionSnapshot {
  primaryPKi: Bounded | null;
  worstMargin: (Bounded & { targetId: number; window: string }) | null;
  primaryCall: string | null;
  /** Receptors where agonism is unwanted and the compound is called an agonist. */
  unwantedAgonism: number[];
  windowLog: number;
  score: number | null;
}

/**
 * Whether later data changed the picture a decision rested on, and how: the worst margin crossed
 * the selectivity window (its window state changed), the call at the primary target changed, or
 * agonism appeared or vanished at a receptor where it is unwanted. Returns the reasons (empty: no change).
 */
export function decisionChanges(then: DecisionSnapshot, now: DecisionSnapshot): string[] {
  const reasons: string[] = [];
  const w0 = then.worstMargin?.window ?? 'none';
  const w1 = now.worstMargin?.window ?? 'none';
  if (w0 !== w1) {
    const fmt = (m: DecisionSnapshot['worstMargin']) => (m ? `${m.qualifier === '=' ? '' : m.qualifier}${m.value.toFixed(2)} (${m.window} the window)` : 'no margin');
    reasons.push(`worst margin moved from ${fmt(then.worstMargin)} to ${fmt(now.worstMargin)}`);
  }
  if ((then.primaryCall ?? null) !== (now.primaryCall ?? null)) reasons.push(`call at the primary target changed from ${then.primaryCall ?? 'none'} to ${now.primaryCall ?? 'none'}`);
  const a0 = [...then.unwantedAgonism].sort().join(',');
  const a1 = [...now.unwantedAgonism].sort().join(',');
  if (a0 !== a1) reasons.push('agonism at a receptor where it is unwanted changed');
  return reasons;
}
