// The raw-data convention for mechanism runs (the `condition` column of a long CSV or plate map).
//
// In a Schild run (a functional-antagonist assay) and an allosteric-modulation run, the `sample`
// column names the agonist and `concentration` its concentration, as in any run; the condition
// names the second ligand held at a fixed concentration in that well:
//
//   antagonist CPD-000123-01 10 nM      (Schild runs)
//   modulator CPD-000124-01 1 uM        (allosteric-modulation runs)
//
// i.e. the role word, the batch or registry number of the second ligand, and its concentration with
// one of the accepted units (M, mM, µM, uM, μM, nM, pM). The agonist's rows without a condition
// are its control curve (agonist alone, shared by every antagonist or modulator of the run). In an
// allosteric-modulation run the modulator alone is measured as an ordinary sample (its own batch in
// `sample`, no condition). A condition that begins with a role word but does not follow the form
// is an error of that row; any other condition stays free text.
import { toMolar } from './raw-data.js';

export type LigandRole = 'antagonist' | 'modulator';

export interface LigandCondition {
  role: LigandRole;
  /** Batch or registry number as written. */
  sample: string;
  concentrationM: number;
}

const ROLE = /^\s*(antagonist|modulator)\b/i;
const FORM = /^\s*(antagonist|modulator)\s+(\S+)\s+([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*(M|mM|µM|uM|μM|nM|pM)\s*$/;

/**
 * Reads a mechanism condition: null when the text is free text (does not begin with a role word),
 * `{ error }` when it begins with one but does not follow the form, else the parsed condition.
 */
export function parseLigandCondition(text: string | null | undefined): LigandCondition | { error: string } | null {
  if (!text || !ROLE.test(text)) return null;
  const m = FORM.exec(text);
  if (!m) return { error: `condition "${text}" must read "<antagonist|modulator> <batch or registry number> <concentration> <unit>", e.g. "antagonist CPD-000123-01 10 nM"` };
  const value = Number(m[3]);
  const molar = toMolar(value, m[4]);
  if (molar === null || !Number.isFinite(molar) || molar < 0) return { error: `condition "${text}": the concentration is not a number ≥ 0` };
  return { role: m[1].toLowerCase() as LigandRole, sample: m[2], concentrationM: molar };
}

export function isLigandCondition(c: ReturnType<typeof parseLigandCondition>): c is LigandCondition {
  return c !== null && !('error' in c);
}

/** The role a run's conditions take in an assay of this kind (null: conditions are free text). */
export function conditionRoleFor(kind: string): LigandRole | null {
  return kind === 'functional-antagonist' ? 'antagonist' : kind === 'allosteric-modulation' ? 'modulator' : null;
}
