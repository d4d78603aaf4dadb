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

/**
 * Schild run example (long format): the agonist CPD-000001-01 alone (control) and with the
 * antagonist CPD-000002-01 at 10 and 100 nM, 6 concentrations each, with BASAL and MAX wells
 * (MAX: the agonist at its maximal concentration).
 */
export const SCHILD_TEMPLATE_CSV = `sample,concentration,unit,response,replicate,condition
BASAL,,,1010,1,
BASAL,,,990,2,
MAX,10,uM,9950,1,
MAX,10,uM,10040,2,
CPD-000001-01,0.1,nM,1180,1,
CPD-000001-01,1,nM,2520,1,
CPD-000001-01,10,nM,7010,1,
CPD-000001-01,100,nM,9510,1,
CPD-000001-01,1000,nM,9930,1,
CPD-000001-01,10000,nM,10010,1,
CPD-000001-01,1,nM,1190,1,antagonist CPD-000002-01 10 nM
CPD-000001-01,10,nM,2560,1,antagonist CPD-000002-01 10 nM
CPD-000001-01,100,nM,7020,1,antagonist CPD-000002-01 10 nM
CPD-000001-01,1000,nM,9490,1,antagonist CPD-000002-01 10 nM
CPD-000001-01,10000,nM,9940,1,antagonist CPD-000002-01 10 nM
CPD-000001-01,100000,nM,10000,1,antagonist CPD-000002-01 10 nM
CPD-000001-01,10,nM,1170,1,antagonist CPD-000002-01 100 nM
CPD-000001-01,100,nM,2490,1,antagonist CPD-000002-01 100 nM
CPD-000001-01,1000,nM,6980,1,antagonist CPD-000002-01 100 nM
CPD-000001-01,10000,nM,9500,1,antagonist CPD-000002-01 100 nM
CPD-000001-01,100000,nM,9960,1,antagonist CPD-000002-01 100 nM
CPD-000001-01,1000000,nM,10020,1,antagonist CPD-000002-01 100 nM
`;

/**
 * Allosteric-modulation run example (long format): the reference agonist CPD-000001-01 alone
 * (control) and with the modulator CPD-000003-01 at 1 µM, and the modulator alone.
 */
export const ALLOSTERIC_TEMPLATE_CSV = `sample,concentration,unit,response,replicate,condition
BASAL,,,1000,1,
MAX,10,uM,10000,1,
CPD-000001-01,0.1,nM,1180,1,
CPD-000001-01,1,nM,2520,1,
CPD-000001-01,10,nM,7010,1,
CPD-000001-01,100,nM,9510,1,
CPD-000001-01,1000,nM,9930,1,
CPD-000001-01,0.01,nM,1150,1,modulator CPD-000003-01 1 uM
CPD-000001-01,0.1,nM,2300,1,modulator CPD-000003-01 1 uM
CPD-000001-01,1,nM,6500,1,modulator CPD-000003-01 1 uM
CPD-000001-01,10,nM,9400,1,modulator CPD-000003-01 1 uM
CPD-000001-01,100,nM,9900,1,modulator CPD-000003-01 1 uM
CPD-000003-01,10,nM,1010,1,
CPD-000003-01,100,nM,990,1,
CPD-000003-01,1000,nM,1020,1,
CPD-000003-01,10000,nM,1000,1,
`;
