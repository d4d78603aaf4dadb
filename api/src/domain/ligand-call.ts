// Ligand-type call per compound × target (DESIGN §3) from evidence items that summarise approved
// results. Every call names the rule that gave it and the items it rests on.
//
// Thresholds: DEFAULT_CALL_THRESHOLDS below — common practice, not a published standard — can be
// overridden for all items (`thresholds`) and per assay (`byAssay[assayId]`, merged last).
//
// Step 1, one finding per item (`classifyEvidence`):
// - binding: pKi (else pIC50) measured ('=' or '>') ≥ activityFloor → binding; below the floor,
//   or censored '<' at or below it → no binding; censored '<' above the floor → unclear (not
//   tested up to the floor).
// - functional-agonist: α (else emax/100) ≥ fullAgonistAlpha with a measured pEC50 ('=') → full
//   agonist; ≥ partialAgonistAlpha with a measured pEC50 → partial agonist; α at or above the
//   partial threshold without a measured pEC50 → unclear. Below the partial threshold: in a system
//   with constitutive activity, a basal change (else α·100 when α < 0) ≤ −basalChange % of the
//   reference window → inverse agonist, within ±basalChange → basal unchanged (no agonism, and
//   no inverse agonism: positive evidence of neutrality), ≥ +basalChange → unclear; without
//   constitutive activity → no agonism (neutral and inverse cannot be told apart there).
//   No α and no emax: a censored pEC50 ('<') → no agonism, otherwise unclear.
// - functional-antagonist: pKB (else pIC50) against the floor as for binding → antagonism / no
//   antagonism / unclear. A Schild 'saturating-shift' makes it negative allosteric modulator (a
//   shift with a ceiling is the signature of limited negative cooperativity — REFERENCES.md §7;
//   Christopoulos & Kenakin 2002, from memory); 'slope-not-unity' and 'depressed-maximum' are
//   noted.
// - allosteric-modulation: `classifyModulator` (allosteric.ts) on the fold-shift, Emax change
//   and the modulator-alone α → positive / negative allosteric modulator, allosteric agonist,
//   no modulation (neutral) or unclear.
//
// Step 2, the call (`callLigandType`):
// 1. no items → inconclusive.
// 2. any allosteric finding: PAM and NAM together → inconclusive (conflict; probe dependence?);
//    allosteric agonist, or PAM with orthosteric-looking agonism → allosteric agonist (conflicts:
//    NAM, inverse agonism); PAM → positive allosteric modulator (conflicts: inverse agonism,
//    antagonism); NAM → negative allosteric modulator (conflicts: agonism, inverse agonism;
//    antagonism is consistent with it).
// 3. agonism: with inverse agonism → conflict; a full agonist with antagonism or with no agonism
//    in another agonist-mode assay → conflict; full in one assay and partial in another → partial
//    agonist (efficacy depends on receptor reserve; the lower call is the one the data support in
//    every system); a partial agonist with antagonism, or with no agonism in a lower-reserve
//    system, stays a partial agonist (noted); otherwise full or partial agonist.
// 4. inverse agonism → inverse agonist, unless another constitutively active system shows the
//    basal unchanged (conflict).
// 5. antagonism or binding: with an agonist-mode item showing no agonism, or an antagonist-mode
//    item → neutral antagonist. The note says whether a constitutively active system showed the
//    basal unchanged; when none was tested neutral and inverse agonism cannot be told apart and the
//    call stays 'neutral antagonist' with that caveat. Binding alone → inconclusive (affinity
//    without function).
// 6. every finding negative (no binding / agonism / antagonism / modulation) → inactive.
// 7. otherwise (only unclear findings) → inconclusive.
// A conflict makes the call inconclusive and is listed in `conflicts`.

import { classifyModulator, DEFAULT_MODULATION_THRESHOLDS, type ModulationThresholds } from './allosteric.js';

export const LIGAND_CALLS = [
  'full agonist',
  'partial agonist',
  'neutral antagonist',
  'inverse agonist',
  'positive allosteric modulator',
  'negative allosteric modulator',
  'allosteric agonist',
  'inactive',
  'inconclusive',
] as const;
export type LigandCall = (typeof LIGAND_CALLS)[number];

export type EvidenceAssayKind = 'binding' | 'functional-agonist' | 'functional-antagonist' | 'allosteric-modulation';

/** A p-value (−log M) with its censoring qualifier ('=' when absent). */
export interface PValue {
  value: number;
  qualifier?: '=' | '<' | '>';
}

/** One approved result, summarised for the call. */
export interface EvidenceItem {
  resultId: string;
  assayId: string;
  assayKind: EvidenceAssayKind;
  /** The assay system shows constitutive (agonist-independent) activity. */
  constitutiveActivity?: boolean;
  pKi?: PValue | null;
  pEC50?: PValue | null;
  pIC50?: PValue | null;
  pKB?: PValue | null;
  /** Maximal response in % of the reference agonist over basal. */
  emax?: number | null;
  /** Intrinsic activity α; in an allosteric-modulation assay, α of the modulator alone. */
  alpha?: number | null;
  /** Change of the basal signal in % of the reference window (negative = fall). */
  basalChange?: number | null;
  /** Allosteric-modulation: EC50(0)/EC50([B]) of the agonist (the most extreme tested). */
  foldShift?: number | null;
  /** Allosteric-modulation: agonist Emax([B])/Emax(0) − 1 (a fraction). */
  emaxChange?: number | null;
  /** Flags of a Schild analysis behind this result (schild.ts). */
  schildFlags?: readonly string[];
}

export interface CallThresholds extends ModulationThresholds {
  /** α at or above which an agonist is full. */
  fullAgonistAlpha: number;
  /** α at or above which (below full) an agonist is partial; below it: no agonism. */
  partialAgonistAlpha: number;
  /** Basal change (% of the reference window): a fall ≥ this is inverse agonism; within ± it, unchanged. */
  basalChange: number;
  /** pKi / pKB / pIC50 at or above which a compound counts as active (5 = 10 µM). */
  activityFloor: number;
}

/**
 * Default thresholds (common practice, not a published standard): full agonist α ≥ 0.8; partial
 * agonist 0.2 ≤ α < 0.8 with a measurable potency; inverse agonist when, in a constitutively
 * active system, the basal signal falls by ≥ 20 % of the reference window; basal unchanged within
 * ±20 %; active when pKi/pKB/pIC50 ≥ 5; PAM fold-shift ≥ 2 or Emax +20 %; NAM fold-shift ≤ 0.5 or
 * Emax −20 %; allosteric agonist when the modulator alone gives α ≥ 0.2.
 */
export const DEFAULT_CALL_THRESHOLDS: Readonly<CallThresholds> = Object.freeze({
  fullAgonistAlpha: 0.8,
  partialAgonistAlpha: 0.2,
  basalChange: 20,
  activityFloor: 5,
  ...DEFAULT_MODULATION_THRESHOLDS,
});

export interface CallOptions {
  /** Overrides for every item, merged over the defaults. */
  thresholds?: Partial<CallThresholds>;
  /** Per-assay overrides, merged last. */
  byAssay?: Readonly<Record<string, Partial<CallThresholds>>>;
}

export type FindingKind =
  | 'full agonist'
  | 'partial agonist'
  | 'inverse agonist'
  | 'basal unchanged'
  | 'no agonism'
  | 'antagonism'
  | 'no antagonism'
  | 'binding'
  | 'no binding'
  | 'positive allosteric modulator'
  | 'negative allosteric modulator'
  | 'allosteric agonist'
  | 'no modulation'
  | 'unclear';

export interface Finding {
  kind: FindingKind;
  /** Human-readable rule, e.g. "α 0.92 ≥ 0.80 → full agonist". */
  rule: string;
}

export interface LigandCallResult {
  call: LigandCall;
  /** The rule that gave the call, human-readable. */
  rule: string;
  evidence: { resultId: string; assayId: string; note: string }[];
  conflicts?: { resultIds: string[]; note: string }[];
}

/** The thresholds that apply to one assay: defaults, then `thresholds`, then `byAssay[assayId]`. */
export function resolveThresholds(assayId: string, options: CallOptions = {}): CallThresholds {
  return { ...DEFAULT_CALL_THRESHOLDS, ...(options.thresholds ?? {}), ...(options.byAssay?.[assayId] ?? {}) };
}

const NEGATIVE: readonly FindingKind[] = ['no agonism', 'basal unchanged', 'no antagonism', 'no binding', 'no modulation'];

/** The finding of one evidence item under the given thresholds (step 1 in the file header). */
export function classifyEvidence(item: EvidenceItem, th: CallThresholds): Finding {
  switch (item.assayKind) {
    case 'binding':
      return affinityFinding(item.pKi ?? item.pIC50 ?? null, item.pKi ? 'pKi' : 'pIC50', th, 'binding', 'no binding');
    case 'functional-antagonist': {
      const f = affinityFinding(item.pKB ?? item.pIC50 ?? null, item.pKB ? 'pKB' : 'pIC50', th, 'antagonism', 'no antagonism');
      const schild = item.schildFlags ?? [];
      if (f.kind === 'antagonism' && schild.includes('saturating-shift')) {
        return { kind: 'negative allosteric modulator', rule: `${f.rule.replace(/ → antagonism$/, '')} with a saturating Schild shift → negative allosteric modulator` };
      }
      const notes = schild.filter((s) => s === 'slope-not-unity' || s === 'depressed-maximum');
      return notes.length ? { ...f, rule: `${f.rule} (Schild: ${notes.join(', ')} — possibly not simple competition)` } : f;
    }
    case 'allosteric-modulation': {
      const c = classifyModulator(
        { foldShifts: item.foldShift != null ? [item.foldShift] : [], emaxChanges: item.emaxChange != null ? [item.emaxChange] : [], aloneAlpha: item.alpha ?? null },
        th,
      );
      if (c.call === 'neutral') return { kind: 'no modulation', rule: c.rule };
      if (c.call === 'inconclusive') return { kind: 'unclear', rule: c.rule };
      return { kind: c.call, rule: c.rule };
    }
    case 'functional-agonist':
      return agonistFinding(item, th);
  }
}

function affinityFinding(p: PValue | null, name: string, th: CallThresholds, active: FindingKind, inactive: FindingKind): Finding {
  if (!p || !Number.isFinite(p.value)) return { kind: 'unclear', rule: `no ${name} → unclear` };
  const q = p.qualifier ?? '=';
  const floor = fmt(th.activityFloor);
  if (q === '<') {
    return p.value <= th.activityFloor
      ? { kind: inactive, rule: `${name} < ${fmt(p.value, th.activityFloor)} (at or below the floor ${floor}) → ${inactive}` }
      : { kind: 'unclear', rule: `${name} < ${fmt(p.value, th.activityFloor)}, censored above the floor ${floor} (not tested down to it) → unclear` };
  }
  if (p.value >= th.activityFloor) return { kind: active, rule: `${name} ${q === '>' ? '> ' : ''}${fmt(p.value, th.activityFloor)} ≥ ${floor} → ${active}` };
  return { kind: inactive, rule: `${name} ${fmt(p.value, th.activityFloor)} < ${floor} → ${inactive}` };
}

function agonistFinding(item: EvidenceItem, th: CallThresholds): Finding {
  const alpha = item.alpha ?? (item.emax != null ? item.emax / 100 : null);
  const alphaName = item.alpha != null ? 'α' : 'Emax/100';
  const potency = item.pEC50 ?? null;
  const measured = potency !== null && Number.isFinite(potency.value) && (potency.qualifier ?? '=') === '=';
  if (alpha === null || !Number.isFinite(alpha)) {
    if (potency && potency.qualifier === '<') return { kind: 'no agonism', rule: `pEC50 < ${fmt(potency.value)} and no response → no agonism` };
    return { kind: 'unclear', rule: 'no α or Emax in agonist mode → unclear' };
  }
  if (alpha >= th.partialAgonistAlpha) {
    if (!measured) return { kind: 'unclear', rule: `${alphaName} ${fmt(alpha, th.partialAgonistAlpha)} ≥ ${fmt(th.partialAgonistAlpha)} but no measured pEC50 → unclear` };
    if (alpha >= th.fullAgonistAlpha) return { kind: 'full agonist', rule: `${alphaName} ${fmt(alpha, th.fullAgonistAlpha)} ≥ ${fmt(th.fullAgonistAlpha)} → full agonist` };
    return { kind: 'partial agonist', rule: `${fmt(th.partialAgonistAlpha)} ≤ ${alphaName} ${fmt(alpha, alpha < (th.partialAgonistAlpha + th.fullAgonistAlpha) / 2 ? th.partialAgonistAlpha : th.fullAgonistAlpha)} < ${fmt(th.fullAgonistAlpha)} → partial agonist` };
  }
  const below = `${alphaName} ${fmt(alpha, th.partialAgonistAlpha)} < ${fmt(th.partialAgonistAlpha)}`;
  if (!item.constitutiveActivity) return { kind: 'no agonism', rule: `${below} → no agonism (no constitutive activity: neutral and inverse cannot be told apart)` };
  const basal = item.basalChange ?? (alpha < 0 ? alpha * 100 : null);
  const basalName = item.basalChange != null ? 'basal change' : 'basal change (α·100)';
  if (basal === null || !Number.isFinite(basal)) return { kind: 'no agonism', rule: `${below}; basal change not measured → no agonism` };
  const band = th.basalChange;
  if (basal <= -band) return { kind: 'inverse agonist', rule: `${below}; ${basalName} ${pct(basal, band)} ≤ −${pct(band)} in a constitutively active system → inverse agonist` };
  if (basal < band) return { kind: 'basal unchanged', rule: `${below}; ${basalName} ${pct(basal, band)} within ±${pct(band)} in a constitutively active system → no agonism, basal unchanged` };
  return { kind: 'unclear', rule: `${below} but ${basalName} ${pct(basal, band)} ≥ +${pct(band)} → unclear` };
}

/**
 * The ligand-type call for one compound × target from its evidence items (see the file header
 * for every rule). Thresholds: DEFAULT_CALL_THRESHOLDS, overridden by `options`.
 */
export function callLigandType(items: readonly EvidenceItem[], options: CallOptions = {}): LigandCallResult {
  if (!items.length) return { call: 'inconclusive', rule: 'no approved results → inconclusive', evidence: [] };
  const findings = items.map((item) => ({ item, finding: classifyEvidence(item, resolveThresholds(item.assayId, options)) }));
  const evidence = findings.map(({ item, finding }) => ({ resultId: item.resultId, assayId: item.assayId, note: finding.rule }));
  const of = (...kinds: FindingKind[]) => findings.filter((f) => kinds.includes(f.finding.kind));
  const has = (...kinds: FindingKind[]) => of(...kinds).length > 0;
  const rules = (...kinds: FindingKind[]) => of(...kinds).map((f) => f.finding.rule);
  const ids = (...kinds: FindingKind[]) => of(...kinds).map((f) => f.item.resultId);

  const conflicts: { resultIds: string[]; note: string }[] = [];
  const conflict = (a: FindingKind[], b: FindingKind[], note: string) => {
    if (has(...a) && has(...b)) conflicts.push({ resultIds: [...ids(...a), ...ids(...b)], note });
  };
  const decide = (call: LigandCall, support: FindingKind[], extra: string[] = []): LigandCallResult => {
    if (conflicts.length) {
      return { call: 'inconclusive', rule: `conflicting evidence (${conflicts.map((c) => c.note).join('; ')}) → inconclusive`, evidence, conflicts };
    }
    const used = [...new Set(rules(...support))];
    // A single rule that already ends in the call is the whole story.
    if (used.length === 1 && !extra.length && used[0].endsWith(`→ ${call}`)) return { call, rule: used[0], evidence };
    return { call, rule: `${used.join('; ')}${extra.length ? `; ${extra.join('; ')}` : ''} ⇒ ${call}`, evidence };
  };

  const pam = has('positive allosteric modulator');
  const nam = has('negative allosteric modulator');
  const agoAllo = has('allosteric agonist');
  const agonism = has('full agonist', 'partial agonist');

  if (pam || nam || agoAllo) {
    conflict(['positive allosteric modulator'], ['negative allosteric modulator'], 'positive and negative allosteric modulation in different assays (probe dependence?)');
    if (agoAllo || (pam && agonism)) {
      conflict(['allosteric agonist', 'positive allosteric modulator'], ['inverse agonist'], 'allosteric agonism and inverse agonism');
      const extra = pam && agonism && !agoAllo ? ['potentiates and activates on its own (ago-PAM)'] : [];
      return decide('allosteric agonist', ['allosteric agonist', 'positive allosteric modulator', 'full agonist', 'partial agonist'], extra);
    }
    if (pam) {
      conflict(['positive allosteric modulator'], ['inverse agonist'], 'positive allosteric modulation and inverse agonism');
      conflict(['positive allosteric modulator'], ['antagonism'], 'positive allosteric modulation and antagonism');
      return decide('positive allosteric modulator', ['positive allosteric modulator']);
    }
    conflict(['negative allosteric modulator'], ['full agonist', 'partial agonist'], 'negative allosteric modulation and agonism');
    conflict(['negative allosteric modulator'], ['inverse agonist'], 'negative allosteric modulation and inverse agonism');
    const extra = has('antagonism') ? ['antagonism in other assays is consistent with it'] : [];
    return decide('negative allosteric modulator', ['negative allosteric modulator'], extra);
  }

  if (agonism) {
    conflict(['full agonist', 'partial agonist'], ['inverse agonist'], 'agonism and inverse agonism');
    conflict(['full agonist'], ['antagonism'], 'full agonism in one assay and antagonism in another');
    conflict(['full agonist'], ['no agonism', 'basal unchanged'], 'full agonism in one agonist-mode assay and none in another');
    if (has('partial agonist')) {
      const extra = [
        ...(has('full agonist') ? ['full agonism elsewhere reflects receptor reserve; the lower efficacy is taken'] : []),
        ...(has('antagonism') ? ['antagonism is consistent with partial agonism'] : []),
        ...(has('no agonism', 'basal unchanged') ? ['no agonism in a lower-reserve system is consistent with partial agonism'] : []),
      ];
      return decide('partial agonist', ['partial agonist'], extra);
    }
    return decide('full agonist', ['full agonist']);
  }

  if (has('inverse agonist')) {
    conflict(['inverse agonist'], ['basal unchanged'], 'the basal signal falls in one constitutively active system and not in another');
    return decide('inverse agonist', ['inverse agonist']);
  }

  if (has('antagonism', 'binding')) {
    const functional = has('antagonism') || has('no agonism', 'basal unchanged');
    if (!functional) {
      return { call: 'inconclusive', rule: `${rules('binding').join('; ')}; no functional result → affinity without function: inconclusive`, evidence };
    }
    const note = has('basal unchanged')
      ? 'the basal signal is unchanged in a constitutively active system (neutral, not inverse)'
      : 'no constitutively active system tested: neutral antagonism and inverse agonism cannot be told apart';
    return decide('neutral antagonist', ['antagonism', 'binding', 'no agonism', 'basal unchanged'], [note]);
  }

  if (findings.every((f) => NEGATIVE.includes(f.finding.kind))) {
    return { call: 'inactive', rule: `${[...new Set(rules(...NEGATIVE))].join('; ')} ⇒ inactive`, evidence };
  }
  return { call: 'inconclusive', rule: `no finding is decisive (${rules('unclear').join('; ')}) → inconclusive`, evidence };
}

/**
 * True when a later computed call contradicts a manual override: the computed call is definite
 * (not 'inconclusive') and differs from the override. An inconclusive computation leaves the
 * override standing.
 */
export function overrideIsContradicted(overrideCall: LigandCall, computedCall: LigandCall): boolean {
  return computedCall !== 'inconclusive' && computedCall !== overrideCall;
}

/** Two decimals, or more when two would make a value look equal to the threshold it is compared with. */
function fmt(v: number, against?: number): string {
  const s = v.toFixed(2);
  return against !== undefined && v !== against && s === against.toFixed(2) ? String(Number(v.toPrecision(6))) : s;
}

/** One decimal, or more when one would make a value look equal to the threshold it is compared with. */
function pct(v: number, against?: number): string {
  const s = String(Number(v.toFixed(1)));
  const shown = against !== undefined && Math.abs(v) !== Math.abs(against) && s.replace('-', '') === String(Number(Math.abs(against).toFixed(1))) ? String(Number(v.toPrecision(6))) : s;
  return `${shown} %`.replace('-', '−');
}
