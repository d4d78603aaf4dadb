import { expect } from 'chai';
import { fitFourPL, fourPL, type CurvePoint } from '../../api/src/domain/curve-fit.js';
import {
  callLigandType,
  classifyEvidence,
  DEFAULT_CALL_THRESHOLDS,
  overrideIsContradicted,
  resolveThresholds,
  type EvidenceItem,
  type LigandCall,
} from '../../api/src/domain/ligand-call.js';
import { deriveResultValues } from '../../api/src/domain/result-values.js';
import { gaussian } from '../helpers/seeded-noise.js';

// Thresholds are common practice, not a published standard (ligand-call.ts); each is tested on
// both sides of its boundary.

let next = 0;
const id = () => `r${++next}`;
const agonist = (alpha: number | null, extra: Partial<EvidenceItem> = {}): EvidenceItem => ({ resultId: id(), assayId: 'ago', assayKind: 'functional-agonist', pEC50: { value: 7.5 }, alpha, ...extra });
const antagonist = (pKB: number, extra: Partial<EvidenceItem> = {}): EvidenceItem => ({ resultId: id(), assayId: 'ant', assayKind: 'functional-antagonist', pKB: { value: pKB }, ...extra });
const binding = (pKi: number, qualifier: '=' | '<' | '>' = '='): EvidenceItem => ({ resultId: id(), assayId: 'bind', assayKind: 'binding', pKi: { value: pKi, qualifier } });
const modulation = (extra: Partial<EvidenceItem>): EvidenceItem => ({ resultId: id(), assayId: 'allo', assayKind: 'allosteric-modulation', ...extra });
const call = (...items: EvidenceItem[]): LigandCall => callLigandType(items).call;

/** An agonist-mode result from a simulated, fitted curve (fitFourPL + deriveResultValues), as the service would build it. */
function simulatedAgonistItem(p: { top: number; logEC50: number; hillSlope: number }, constitutiveActivity: boolean, seed: number): EvidenceItem {
  const g = gaussian(seed);
  const logs = Array.from({ length: 11 }, (_, i) => -10 + i * 0.5);
  const points: CurvePoint[] = logs.flatMap((x) => [0, 1].map(() => ({ logConc: x, response: fourPL(x, { bottom: 0, ...p }) + 3 * g() })));
  const fit = fitFourPL(points);
  const v = deriveResultValues('functional-agonist', fit, { radioligandConcM: null, radioligandKdM: null, agonistConcM: null, agonistEc50M: null, agonistHill: null }, 100);
  return {
    resultId: id(),
    assayId: 'ago',
    assayKind: 'functional-agonist',
    constitutiveActivity,
    pEC50: v.pEC50 ? { value: v.pEC50.value, qualifier: v.pEC50.qualifier } : null,
    alpha: v.alpha?.value ?? (fit.flags.includes('flat') ? 0 : null),
    // Over basal, the change of the basal signal at the top concentration is the fitted plateau (flat: ~0).
    basalChange: fit.ok ? (v.emax?.value ?? 0) : 0,
  };
}

describe('domain/ligand-call', () => {
  describe('simulated compounds, fitted and called', () => {
    it('a full agonist (top 95 % of the reference) is called full agonist', () => {
      expect(call(simulatedAgonistItem({ top: 95, logEC50: -7.5, hillSlope: 1 }, false, 1))).to.equal('full agonist');
    });
    it('a partial agonist (top 45 %) is called partial agonist', () => {
      expect(call(simulatedAgonistItem({ top: 45, logEC50: -7, hillSlope: 1 }, false, 2))).to.equal('partial agonist');
    });
    it('a neutral antagonist in a constitutively active system (basal unchanged, pKB 8.2) is called neutral antagonist, with the basal evidence named', () => {
      const r = callLigandType([simulatedAgonistItem({ top: 0, logEC50: -7, hillSlope: 1 }, true, 3), antagonist(8.2)]);
      expect(r.call).to.equal('neutral antagonist');
      expect(r.rule).to.match(/basal signal is unchanged in a constitutively active system/);
      expect(r.evidence).to.have.length(2);
    });
    it('an inverse agonist (basal falls by 40 % of the window) is called inverse agonist', () => {
      const item = simulatedAgonistItem({ top: -40, logEC50: -7.5, hillSlope: 1 }, true, 4);
      expect(item.alpha).to.be.closeTo(-0.4, 0.05);
      expect(call(item, antagonist(8))).to.equal('inverse agonist');
    });
  });

  describe('default thresholds, each on both sides of its boundary', () => {
    it('are the documented values', () => {
      expect(DEFAULT_CALL_THRESHOLDS).to.deep.equal({ fullAgonistAlpha: 0.8, partialAgonistAlpha: 0.2, basalChange: 20, activityFloor: 5, pamFoldShift: 2, namFoldShift: 0.5, emaxChange: 0.2, allostericAgonistAlpha: 0.2 });
    });
    it('full agonist: α exactly 0.8 → full; 0.79 → partial', () => {
      expect(call(agonist(0.8))).to.equal('full agonist');
      expect(call(agonist(0.79))).to.equal('partial agonist');
    });
    it('partial agonist: α exactly 0.2 → partial; 0.19 → no agonism (inactive alone)', () => {
      expect(call(agonist(0.2))).to.equal('partial agonist');
      expect(call(agonist(0.19))).to.equal('inactive');
    });
    it('partial agonist needs a measured potency: α 0.5 with pEC50 censored → inconclusive', () => {
      expect(call(agonist(0.5, { pEC50: { value: 5, qualifier: '<' } }))).to.equal('inconclusive');
    });
    it('emax/100 stands in for α when α is absent: Emax 85 % → full agonist', () => {
      expect(call(agonist(null, { emax: 85 }))).to.equal('full agonist');
    });
    it('inverse agonist: basal change exactly −20 % → inverse; −19 % → basal unchanged (neutral with antagonism)', () => {
      expect(call(agonist(0, { constitutiveActivity: true, basalChange: -20 }), antagonist(8))).to.equal('inverse agonist');
      expect(call(agonist(0, { constitutiveActivity: true, basalChange: -19 }), antagonist(8))).to.equal('neutral antagonist');
    });
    it('without a basal change, a negative α stands in for it: α −0.2 → inverse; −0.19 → unchanged', () => {
      expect(call(agonist(-0.2, { constitutiveActivity: true }), antagonist(8))).to.equal('inverse agonist');
      expect(call(agonist(-0.19, { constitutiveActivity: true }), antagonist(8))).to.equal('neutral antagonist');
    });
    it('a fall of the basal signal in a system without constitutive activity is not inverse agonism', () => {
      expect(call(agonist(-0.5, { basalChange: -50 }), antagonist(8))).to.equal('neutral antagonist');
    });
    it('activity floor: pKB exactly 5 → antagonism (neutral antagonist); 4.99 → inactive', () => {
      expect(call(antagonist(5))).to.equal('neutral antagonist');
      expect(call(antagonist(4.99))).to.equal('inactive');
    });
    it('activity floor for binding: pKi 5 with agonist-mode inactivity → neutral antagonist; pKi 4.99 → inactive', () => {
      expect(call(binding(5), agonist(0.05))).to.equal('neutral antagonist');
      expect(call(binding(4.99), agonist(0.05))).to.equal('inactive');
    });
    it('PAM fold-shift exactly 2 → PAM; 1.99 → inactive (no modulation)', () => {
      expect(call(modulation({ foldShift: 2 }))).to.equal('positive allosteric modulator');
      expect(call(modulation({ foldShift: 1.99 }))).to.equal('inactive');
    });
    it('NAM fold-shift exactly 0.5 → NAM; 0.51 → inactive', () => {
      expect(call(modulation({ foldShift: 0.5 }))).to.equal('negative allosteric modulator');
      expect(call(modulation({ foldShift: 0.51 }))).to.equal('inactive');
    });
    it('allosteric agonist: modulator alone α exactly 0.2 → allosteric agonist; 0.19 → inactive', () => {
      expect(call(modulation({ foldShift: 1, alpha: 0.2 }))).to.equal('allosteric agonist');
      expect(call(modulation({ foldShift: 1, alpha: 0.19 }))).to.equal('inactive');
    });
  });

  describe('per-assay overrides', () => {
    it('an assay with fullAgonistAlpha 0.7 calls α 0.75 a full agonist; other assays keep 0.8', () => {
      const item = agonist(0.75, { assayId: 'low-reserve' });
      expect(callLigandType([item]).call).to.equal('partial agonist');
      expect(callLigandType([item], { byAssay: { 'low-reserve': { fullAgonistAlpha: 0.7 } } }).call).to.equal('full agonist');
      expect(callLigandType([agonist(0.75)], { byAssay: { 'low-reserve': { fullAgonistAlpha: 0.7 } } }).call).to.equal('partial agonist');
    });
    it('per-assay overrides are merged over global ones, which are merged over the defaults', () => {
      const th = resolveThresholds('x', { thresholds: { activityFloor: 6, fullAgonistAlpha: 0.9 }, byAssay: { x: { activityFloor: 5.5 } } });
      expect(th).to.include({ activityFloor: 5.5, fullAgonistAlpha: 0.9, partialAgonistAlpha: 0.2 });
    });
    it('a stricter activity floor turns pKB 5.5 from antagonism into inactivity', () => {
      expect(callLigandType([antagonist(5.5)]).call).to.equal('neutral antagonist');
      expect(callLigandType([antagonist(5.5)], { byAssay: { ant: { activityFloor: 6 } } }).call).to.equal('inactive');
    });
  });

  describe('combining evidence', () => {
    it('the rule names what decided: "α 0.92 ≥ 0.80 → full agonist"', () => {
      const r = callLigandType([agonist(0.92)]);
      expect(r.evidence[0].note).to.equal('α 0.92 ≥ 0.80 → full agonist');
      expect(r.rule).to.equal('α 0.92 ≥ 0.80 → full agonist');
      expect(callLigandType([agonist(0, { constitutiveActivity: true, basalChange: -35 })]).rule).to.equal('α 0.00 < 0.20; basal change −35 % ≤ −20 % in a constitutively active system → inverse agonist');
    });
    it('shows enough digits to tell a value from its threshold: α 0.7999 < 0.80', () => {
      expect(callLigandType([agonist(0.7999)]).evidence[0].note).to.equal('0.20 ≤ α 0.7999 < 0.80 → partial agonist');
    });
    it('full agonist in one assay and neutral antagonist in another → inconclusive, with the conflict listed', () => {
      const full = agonist(0.95, { assayId: 'cAMP' });
      const noAgonism = agonist(0.02, { assayId: 'arrestin' });
      const block = antagonist(8);
      const r = callLigandType([full, noAgonism, block]);
      expect(r.call).to.equal('inconclusive');
      expect(r.conflicts!.map((c) => c.note)).to.include('full agonism in one assay and antagonism in another');
      expect(r.conflicts!.flatMap((c) => c.resultIds)).to.include.members([full.resultId, block.resultId, noAgonism.resultId]);
    });
    it('full in one assay and partial in another → partial agonist (receptor reserve), noted', () => {
      const r = callLigandType([agonist(0.9), agonist(0.5, { assayId: 'other' })]);
      expect(r.call).to.equal('partial agonist');
      expect(r.rule).to.match(/receptor reserve/);
    });
    it('a partial agonist that also antagonises the full agonist stays a partial agonist', () => {
      expect(call(agonist(0.4), antagonist(7.8))).to.equal('partial agonist');
    });
    it('agonism and inverse agonism → inconclusive', () => {
      expect(call(agonist(0.6), agonist(-0.5, { assayId: 'ca', constitutiveActivity: true }))).to.equal('inconclusive');
    });
    it('basal falls in one constitutively active system and not in another → inconclusive', () => {
      expect(call(agonist(-0.5, { constitutiveActivity: true }), agonist(0, { assayId: 'ca2', constitutiveActivity: true, basalChange: 2 }))).to.equal('inconclusive');
    });
    it('antagonism without a constitutively active system → neutral antagonist with the caveat that inverse agonism is not excluded', () => {
      const r = callLigandType([antagonist(7.5), agonist(0.03)]);
      expect(r.call).to.equal('neutral antagonist');
      expect(r.rule).to.match(/cannot be told apart/);
    });
    it('binding alone → inconclusive (affinity without function)', () => {
      const r = callLigandType([binding(8)]);
      expect(r.call).to.equal('inconclusive');
      expect(r.rule).to.match(/affinity without function/);
    });
    it('every item inactive (censored below the floor) → inactive', () => {
      expect(call(binding(5, '<'), antagonist(4.5, { pKB: { value: 5, qualifier: '<' } }), agonist(null, { pEC50: { value: 5, qualifier: '<' } }))).to.equal('inactive');
    });
    it('a censored potency above the floor (pKi < 7: not tested down to 10 µM) is not inactivity → inconclusive', () => {
      const r = callLigandType([binding(7, '<')]);
      expect(r.call).to.equal('inconclusive');
      expect(r.evidence[0].note).to.match(/not tested down to it/);
    });
    it('a saturating Schild shift makes antagonism a negative allosteric modulator', () => {
      const r = callLigandType([antagonist(7, { schildFlags: ['saturating-shift', 'slope-not-unity'] })]);
      expect(r.call).to.equal('negative allosteric modulator');
    });
    it('a Schild slope far from 1 is noted on the antagonism', () => {
      const r = callLigandType([antagonist(7, { schildFlags: ['slope-not-unity'] })]);
      expect(r.call).to.equal('neutral antagonist');
      expect(r.evidence[0].note).to.match(/slope-not-unity/);
    });
    it('PAM in the modulation assay plus agonism in agonist mode → allosteric agonist (ago-PAM)', () => {
      const r = callLigandType([modulation({ foldShift: 6 }), agonist(0.4)]);
      expect(r.call).to.equal('allosteric agonist');
      expect(r.rule).to.match(/ago-PAM/);
    });
    it('PAM in one modulation assay and NAM in another → inconclusive', () => {
      expect(call(modulation({ foldShift: 6 }), modulation({ assayId: 'allo2', foldShift: 0.2 }))).to.equal('inconclusive');
    });
    it('NAM with antagonism elsewhere stays a NAM', () => {
      expect(call(modulation({ foldShift: 0.1 }), antagonist(7))).to.equal('negative allosteric modulator');
    });
    it('no items → inconclusive', () => {
      expect(callLigandType([]).call).to.equal('inconclusive');
    });
    it('unclear items next to a decisive one do not change the call, and stay in the evidence', () => {
      const r = callLigandType([agonist(0.9), binding(7, '<')]);
      expect(r.call).to.equal('full agonist');
      expect(r.evidence).to.have.length(2);
    });
  });

  describe('item findings', () => {
    it('a rise of the basal signal ≥ 20 % below the partial-agonist α is unclear', () => {
      expect(classifyEvidence(agonist(0.1, { constitutiveActivity: true, basalChange: 25 }), DEFAULT_CALL_THRESHOLDS).kind).to.equal('unclear');
    });
    it('binding reported as pKi > 9 counts as binding', () => {
      expect(classifyEvidence(binding(9, '>'), DEFAULT_CALL_THRESHOLDS).kind).to.equal('binding');
    });
  });

  describe('overrideIsContradicted', () => {
    it('is true when a definite computed call differs from the override', () => {
      expect(overrideIsContradicted('neutral antagonist', 'inverse agonist')).to.equal(true);
    });
    it('is false when they agree or the computed call is inconclusive', () => {
      expect(overrideIsContradicted('partial agonist', 'partial agonist')).to.equal(false);
      expect(overrideIsContradicted('partial agonist', 'inconclusive')).to.equal(false);
    });
  });
});
