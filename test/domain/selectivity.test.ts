import { expect } from 'chai';
import { decisionChanges, rankScore, type DecisionSnapshot, type RankingConfig } from '../../api/src/domain/selectivity.js';

const m = (value: number, qualifier: '=' | '<' | '>' = '=') => ({ value, qualifier });

describe('domain/selectivity', () => {
  describe('ranking score = Σ weight × value (our rule; weights set per project)', () => {
    // Hand-worked for three compounds with weights potency 1, margin 1, LipE 0.5:
    //   P: pKi 8.5, margin 2.0, LipE 5.0 → 8.5 + 2.0 + 2.5 = 13.0
    //   Q: pKi 9.0, margin 1.0, LipE 4.0 → 9.0 + 1.0 + 2.0 = 12.0
    //   R: pKi 7.5, margin 3.0, LipE 6.0 → 7.5 + 3.0 + 3.0 = 13.5   → order R, P, Q
    // With the margin weight 0 instead: P 11.0, Q 11.0, R 10.5; with potency 2, margin 0: P 19.5, Q 20.0, R 18.0 → Q, P, R.
    const compounds = {
      P: { potency: m(8.5), worstMargin: m(2.0), lipe: m(5.0), primaryCall: 'full agonist' },
      Q: { potency: m(9.0), worstMargin: m(1.0), lipe: m(4.0), primaryCall: 'partial agonist' },
      R: { potency: m(7.5), worstMargin: m(3.0), lipe: m(6.0), primaryCall: 'full agonist' },
    };
    const order = (config: RankingConfig) =>
      (Object.entries(compounds) as [string, (typeof compounds)['P']][])
        .map(([k, v]) => [k, rankScore(v, config).score!] as const)
        .sort((a, b) => b[1] - a[1]);
    it('hand-worked scores and order', () => {
      const o = order({ potency: 1, margin: 1, lipe: 0.5, requiredCalls: [] });
      expect(o.map(([k]) => k)).to.deep.equal(['R', 'P', 'Q']);
      expect(o.map(([, s]) => s)).to.deep.equal([13.5, 13.0, 12.0]);
    });
    it('changing a weight reorders them as worked by hand', () => {
      const o = order({ potency: 2, margin: 0, lipe: 0.5, requiredCalls: [] });
      expect(o.map(([k]) => k)).to.deep.equal(['Q', 'P', 'R']);
      expect(o.map(([, s]) => s)).to.deep.equal([20.0, 19.5, 18.0]);
    });
    it('breaks the score down term by term', () => {
      const s = rankScore(compounds.P, { potency: 1, margin: 1, lipe: 0.5, requiredCalls: [] });
      expect(s.terms.map((t) => [t.term, t.value, t.weight, t.contribution])).to.deep.equal([
        ['potency', 8.5, 1, 8.5],
        ['margin', 2.0, 1, 2.0],
        ['lipe', 5.0, 0.5, 2.5],
      ]);
    });
    it('a required call at the primary target leaves others unranked, with the reason', () => {
      const s = rankScore(compounds.Q, { potency: 1, margin: 1, lipe: 0.5, requiredCalls: ['full agonist'] });
      expect(s.score).to.equal(null);
      expect(s.excluded).to.equal('the call at the primary target is partial agonist, not full agonist');
      expect(rankScore(compounds.P, { potency: 1, margin: 1, lipe: 0.5, requiredCalls: ['full agonist'] }).score).to.equal(13.0);
    });
    it('a weighted term without a value leaves the compound unranked; a zero-weight one does not', () => {
      const input = { potency: m(8), worstMargin: null, lipe: m(4), primaryCall: null };
      expect(rankScore(input, { potency: 1, margin: 1, lipe: 0, requiredCalls: [] }).excluded).to.equal('no worst margin (log units)');
      expect(rankScore(input, { potency: 1, margin: 0, lipe: 1, requiredCalls: [] }).score).to.equal(12);
    });
    it('a bound counts at its value, with a note', () => {
      const s = rankScore({ potency: m(8), worstMargin: m(3, '>'), lipe: m(4), primaryCall: null }, { potency: 1, margin: 1, lipe: 0, requiredCalls: [] });
      expect(s.score).to.equal(11);
      expect(s.terms[1].note).to.match(/bound/);
    });
  });

  describe('decision review', () => {
    const snap = (value: number, window: string, call = 'full agonist'): DecisionSnapshot => ({
      primaryPKi: m(8),
      worstMargin: { value, qualifier: '=', targetId: 2, window },
      primaryCall: call,
      unwantedAgonism: [],
      windowLog: 2,
      score: null,
    });
    it('a worst margin moving across the window flags the decision', () => {
      expect(decisionChanges(snap(2.4, 'outside'), snap(1.7, 'inside'))).to.have.length(1);
      expect(decisionChanges(snap(2.4, 'outside'), snap(1.7, 'inside'))[0]).to.match(/worst margin moved from 2.40 \(outside the window\) to 1.70 \(inside the window\)/);
    });
    it('a margin that moves but stays on the same side does not', () => {
      expect(decisionChanges(snap(2.4, 'outside'), snap(2.1, 'outside'))).to.deep.equal([]);
    });
    it('a changed call at the primary target flags it', () => {
      expect(decisionChanges(snap(2.4, 'outside'), snap(2.4, 'outside', 'partial agonist'))[0]).to.match(/call at the primary target changed/);
    });
    it('new agonism at a receptor where it is unwanted flags it', () => {
      const now = { ...snap(2.4, 'outside'), unwantedAgonism: [5] };
      expect(decisionChanges(snap(2.4, 'outside'), now)).to.deep.equal(['agonism at a receptor where it is unwanted changed']);
    });
  });
});
