import { expect } from 'chai';
import { operationalModel } from '../../api/src/domain/pharmacology.js';
import { schildAnalysis } from '../../api/src/domain/schild.js';
import { simulateAgonistWithPartner, twoAgonistResponse } from '../../api/src/domain/what-if.js';

// Two agonists at one site under the operational model (Black & Leff 1983; two-agonist form
// derived in what-if.ts from competitive occupancy and the hyperbolic transducer).
const EM = 100;
const full = { logTau: Math.log10(30), logKA: -6 }; // Emax 96.8 %
const partial = { logTau: Math.log10(0.5), logKA: -7.5 }; // Emax 33.3 %
const emaxOf = (p: { logTau: number }) => (EM * 10 ** p.logTau) / (1 + 10 ** p.logTau);

describe('domain/what-if', () => {
  it('with [B] = 0 reproduces the single-agonist operational curve of A (pharmacology.ts operationalModel)', () => {
    const { curves } = simulateAgonistWithPartner(full, partial, { em: EM, bConcsM: [0] });
    expect(curves[0].points.length).to.be.greaterThan(50);
    for (const p of curves[0].points) {
      const expected = operationalModel(10 ** p.logConc, { em: EM, tau: 30, ka: 1e-6 });
      expect(Math.abs(p.response - expected), `log[A] ${p.logConc}`).to.be.at.most(1e-12 * Math.max(expected, 1));
    }
  });

  it('with [A] = 0 gives B\'s own operational curve, and the model is symmetric in A and B', () => {
    for (const b of [1e-10, 1e-8, 1e-6]) {
      expect(twoAgonistResponse(0, b, full, partial, EM)).to.be.closeTo(operationalModel(b, { em: EM, tau: 0.5, ka: 10 ** -7.5 }), 1e-12);
      expect(twoAgonistResponse(3e-7, b, full, partial, EM)).to.be.closeTo(twoAgonistResponse(b, 3e-7, partial, full, EM), 1e-12);
    }
  });

  it('at saturating [B] the response at low [A] equals B\'s own Emax, Em·τB/(1 + τB)', () => {
    const { curves } = simulateAgonistWithPartner(full, partial, { em: EM, bConcsM: [1e-2], logConcRange: [-12, -4] });
    expect(curves[0].baseline).to.be.closeTo(emaxOf(partial), 1e-3);
    expect(curves[0].points[0].response).to.be.closeTo(emaxOf(partial), 1e-3);
  });

  it('a partial agonist lowers the response to a near-maximal concentration of the full agonist toward its own maximum, monotonically with [B]', () => {
    const aConc = 1e-6; // KA of A: about 97 % of A's maximum
    const bConcs = [0, 1e-8, 1e-7, 1e-6, 1e-5, 1e-3];
    const responses = bConcs.map((b) => twoAgonistResponse(aConc, b, full, partial, EM));
    expect(responses[0]).to.be.above(90);
    for (let i = 1; i < responses.length; i++) expect(responses[i], `[B] ${bConcs[i]}`).to.be.below(responses[i - 1]);
    expect(responses[responses.length - 1]).to.be.closeTo(emaxOf(partial), 0.1);
  });

  it('but the full agonist\'s own maximum is surmountable: as [A] → ∞ the response returns to Em·τA/(1 + τA) at every [B]', () => {
    const { curves } = simulateAgonistWithPartner(full, partial, { em: EM, bConcsM: [0, 1e-7, 1e-5] });
    for (const c of curves) {
      expect(c.maximum).to.be.closeTo(emaxOf(full), 1e-12);
      expect(twoAgonistResponse(1e3, c.bConcM, full, partial, EM)).to.be.closeTo(emaxOf(full), 1e-4);
    }
  });

  it('half-way between baseline and maximum lies at the reported midpoint, KA·(1 + b(1 + τB))/(1 + τA)', () => {
    const { curves } = simulateAgonistWithPartner(full, partial, { em: EM, bConcsM: [0, 3e-8, 1e-6] });
    for (const c of curves) {
      expect(twoAgonistResponse(10 ** c.logMidpoint, c.bConcM, full, partial, EM)).to.be.closeTo((c.baseline + c.maximum) / 2, 1e-9);
    }
  });

  it('a compound without efficacy (τB → 0) shifts A like a competitive antagonist: a Schild analysis of the midpoints gives slope 1 and pKB = −log KB', () => {
    const antagonist = { logTau: -8, logKA: -8.3 };
    const bConcs = [0, 1e-8, 1e-7, 1e-6, 1e-5];
    const { curves } = simulateAgonistWithPartner(full, antagonist, { em: EM, bConcsM: bConcs });
    const r = schildAnalysis(curves.map((c) => ({ antagonistConcM: c.bConcM, ec50M: 10 ** c.logMidpoint })));
    expect(r.slope!.value).to.be.closeTo(1, 1e-6);
    expect(r.pKB!.value).to.be.closeTo(8.3, 1e-6);
  });

  it('the default grid spans 3 log units either side of the outermost midpoints, at 0.1 steps', () => {
    const { curves } = simulateAgonistWithPartner(full, partial, { em: EM, bConcsM: [0, 1e-5] });
    const mids = curves.map((c) => c.logMidpoint);
    const xs = curves[0].points.map((p) => p.logConc);
    expect(xs[0]).to.be.closeTo(Math.min(...mids) - 3, 1e-9);
    expect(xs[xs.length - 1]).to.be.at.most(Math.max(...mids) + 3 + 1e-9);
    expect(xs[xs.length - 1]).to.be.above(Math.max(...mids) + 2.9);
    expect(xs[1] - xs[0]).to.be.closeTo(0.1, 1e-9);
  });

  it('refuses a non-positive Em or step', () => {
    expect(() => simulateAgonistWithPartner(full, partial, { em: 0, bConcsM: [0] })).to.throw(RangeError);
    expect(() => simulateAgonistWithPartner(full, partial, { em: 100, bConcsM: [0], step: 0 })).to.throw(RangeError);
  });
});
