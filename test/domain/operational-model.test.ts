import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import { tCritical95 } from '../../api/src/domain/curve-fit.js';
import {
  biasFactor,
  fitOperationalModel,
  LOG_TAU_MAX,
  operationalEc50,
  operationalEmax,
  operationalResponse,
  transductionCoefficient,
  type ConcentrationResponsePoint,
} from '../../api/src/domain/operational-model.js';
import { operationalModel } from '../../api/src/domain/pharmacology.js';
import { gaussian } from '../helpers/seeded-noise.js';

const rel = (a: number, b: number, tol: number, what = '') => expect(Math.abs(a - b) / Math.abs(b), `${what}: ${a} vs ${b}`).to.be.at.most(tol);

const LOGS = Array.from({ length: 13 }, (_, i) => -10 + i * 0.5); // 0.1 nM … 1 mM

/** Operational-model points (pharmacology.ts operationalModel) plus seeded Gaussian noise, in duplicate. */
function simulate(p: { em: number; tau: number; ka: number; n?: number }, sd: number, seed: number, logs = LOGS): ConcentrationResponsePoint[] {
  const g = gaussian(seed);
  return logs.flatMap((x) => [0, 1].map(() => ({ concentrationM: 10 ** x, response: operationalModel(10 ** x, p) + sd * g() })));
}

describe('domain/operational-model', () => {
  // Black & Leff (1983); check values from shared/REFERENCES.md §4 (COMPUTED there by root finding).
  describe('model and derived relations (REFERENCES.md §4 check values)', () => {
    const rows: [number, number, number, number, number, number][] = [
      // KA, τ, n, Emax, EC50, log(τ/KA)
      [1e-6, 10, 1, 90.909091, 9.090909e-8, 7],
      [1e-6, 1, 1, 50, 5.0e-7, 6],
      [1e-6, 0.5, 1, 33.333333, 6.666667e-7, 5.69897],
      [1e-7, 30, 1, 96.774194, 3.225806e-9, 8.477121],
      [1e-6, 10, 2, 99.009901, 1.098960885e-7, 7],
      [1e-6, 3, 0.7, 68.331072, 1.502127646e-7, 6.477121],
    ];
    for (const [ka, tau, n, emax, ec50, coefficient] of rows) {
      it(`KA ${ka}, τ ${tau}, n ${n}: Emax ${emax}, EC50 ${ec50}, log(τ/KA) ${coefficient}`, () => {
        rel(operationalEmax(100, tau, n), emax, 1e-7, 'Emax');
        rel(operationalEc50(ka, tau, n), ec50, 1e-6, 'EC50');
        expect(transductionCoefficient(tau, ka)).to.be.closeTo(coefficient, 1e-6);
      });
    }

    it('the stable log form equals the textbook form E = Em·τⁿ[A]ⁿ/(([A]+KA)ⁿ + τⁿ[A]ⁿ) over 14 log units', () => {
      for (const [ka, tau, n] of rows) {
        for (let x = -14; x <= 0; x += 0.25) {
          const expected = operationalModel(10 ** x, { em: 100, tau, ka, n });
          const actual = operationalResponse(x, { em: 100, logTau: Math.log10(tau), logKA: Math.log10(ka), n });
          expect(Math.abs(actual - expected), `x ${x}`).to.be.at.most(1e-9 * Math.max(expected, 1e-3));
        }
      }
    });

    it('n = 1: EC50 = KA/(1+τ) and Emax = Em·τ/(1+τ) (the model gives Emax/2 at KA/(1+τ); identity)', () => {
      const g = gaussian(101);
      for (let i = 0; i < 25; i++) {
        const tau = 10 ** (2 * g());
        const ka = 10 ** (-7 + g());
        const em = 50 + 50 * Math.abs(g());
        const emax = (em * tau) / (1 + tau);
        rel(operationalEmax(em, tau), emax, 1e-12, 'Emax');
        rel(operationalEc50(ka, tau), ka / (1 + tau), 1e-12, 'EC50');
        rel(operationalModel(ka / (1 + tau), { em, tau, ka }), emax / 2, 1e-12, 'E(EC50)');
        rel(operationalModel(1e6 * ka * (1 + tau), { em, tau, ka }), emax, 1e-5, 'E(∞)');
      }
    });

    it('gives 0 at a basal point ([A] = 0, log concentration −∞)', () => {
      expect(operationalResponse(-Infinity, { em: 100, logTau: 1, logKA: -6 })).to.equal(0);
    });

    it('refuses τ ≤ 0 or KA ≤ 0 in the transduction coefficient', () => {
      expect(() => transductionCoefficient(0, 1e-6)).to.throw(RangeError);
      expect(() => transductionCoefficient(1, 0)).to.throw(RangeError);
    });
  });

  describe('fitting log τ and log KA (Em fixed)', () => {
    it('recovers noise-free data exactly (τ 3, KA 1 µM, n 1; basal points included)', () => {
      const pts = [{ concentrationM: 0, response: 0 }, ...simulate({ em: 100, tau: 3, ka: 1e-6 }, 0, 1)];
      const f = fitOperationalModel(pts, { em: 100 });
      expect(f.ok).to.equal(true);
      expect(f.flags).to.deep.equal([]);
      expect(f.params.logTau.value).to.be.closeTo(Math.log10(3), 1e-6);
      expect(f.params.logKA.value).to.be.closeTo(-6, 1e-6);
      expect(f.logTauOverKA.value).to.be.closeTo(Math.log10(3) + 6, 1e-6);
      expect(f.emax).to.be.closeTo(75, 1e-4);
      expect(f.logEC50).to.be.closeTo(Math.log10(1e-6 / 4), 1e-6);
    });

    it('recovers a fitted transducer slope from noise-free data (τ 4, KA 100 nM, n 1.5)', () => {
      const pts = simulate({ em: 120, tau: 4, ka: 1e-7, n: 1.5 }, 0, 1);
      const f = fitOperationalModel(pts, { em: 120, fitSlope: true });
      expect(f.params.slope.value).to.be.closeTo(1.5, 1e-5);
      expect(f.params.slope.fixed).to.equal(false);
      expect(f.params.logTau.value).to.be.closeTo(Math.log10(4), 1e-5);
      expect(f.params.logKA.value).to.be.closeTo(-7, 1e-5);
    });

    // Simulation check of the confidence intervals: 40 seeded noisy data sets (τ 3, KA 1 µM, SD 4
    // on Em 100, 13 concentrations in duplicate). Nominal coverage is 95 %; we require ≥ 85 % so a
    // correct implementation passes with near certainty while intervals half as wide would fail.
    it('recovers τ and KA from noisy data: the 95 % CIs cover the truth in ≥ 85 % of 40 seeded sets, mean estimates within 0.03 log units', () => {
      const truth = { logTau: Math.log10(3), logKA: -6 };
      let coverTau = 0;
      let coverKA = 0;
      let coverR = 0;
      let sumTau = 0;
      let sumKA = 0;
      const sets = 40;
      for (let seed = 1; seed <= sets; seed++) {
        const f = fitOperationalModel(simulate({ em: 100, tau: 3, ka: 1e-6 }, 4, 1000 + seed), { em: 100 });
        expect(f.flags, `seed ${seed}`).to.deep.equal([]);
        const [t0, t1] = f.params.logTau.ci95!;
        const [k0, k1] = f.params.logKA.ci95!;
        const [r0, r1] = f.logTauOverKA.ci95!;
        if (truth.logTau >= t0 && truth.logTau <= t1) coverTau++;
        if (truth.logKA >= k0 && truth.logKA <= k1) coverKA++;
        if (truth.logTau - truth.logKA >= r0 && truth.logTau - truth.logKA <= r1) coverR++;
        sumTau += f.params.logTau.value;
        sumKA += f.params.logKA.value;
      }
      expect(coverTau / sets, 'log τ coverage').to.be.at.least(0.85);
      expect(coverKA / sets, 'log KA coverage').to.be.at.least(0.85);
      expect(coverR / sets, 'log(τ/KA) coverage').to.be.at.least(0.85);
      expect(sumTau / sets).to.be.closeTo(truth.logTau, 0.03);
      expect(sumKA / sets).to.be.closeTo(truth.logKA, 0.03);
    });

    it('builds each CI as value ± t(dof)·se and log(τ/KA) with se² = var(log τ) + var(log KA) − 2·cov', () => {
      const f = fitOperationalModel(simulate({ em: 100, tau: 2, ka: 3e-7 }, 4, 7), { em: 100 });
      const t = tCritical95(f.dof);
      expect(f.dof).to.equal(26 - 2);
      for (const e of [f.params.logTau, f.params.logKA]) {
        expect(e.ci95![0]).to.be.closeTo(e.value - t * e.se!, 1e-12);
        expect(e.ci95![1]).to.be.closeTo(e.value + t * e.se!, 1e-12);
      }
      const c = f.covariance!;
      expect(f.params.logTau.se).to.be.closeTo(Math.sqrt(c[0][0]), 1e-15);
      expect(f.logTauOverKA.se).to.be.closeTo(Math.sqrt(c[0][0] + c[1][1] - 2 * c[0][1]), 1e-15);
      expect(c[0][1]).to.be.greaterThan(0); // log τ and log KA are positively correlated: the difference is better determined
      expect(f.logTauOverKA.se!).to.be.below(Math.sqrt(c[0][0] + c[1][1]));
    });

    it('ignores excluded points', () => {
      const pts = simulate({ em: 100, tau: 2, ka: 3e-7 }, 4, 8);
      const withOutlier = [...pts, { concentrationM: 1e-7, response: 400, excluded: true }];
      expect(fitOperationalModel(withOutlier, { em: 100 })).to.deep.equal(fitOperationalModel(pts, { em: 100 }));
    });
  });

  describe('against SciPy curve_fit (fixtures/reference/scipy-mechanism.json, make-scipy-mechanism.py)', () => {
    const ref = JSON.parse(readFileSync(new URL('../../fixtures/reference/scipy-mechanism.json', import.meta.url), 'utf8')) as {
      scipyVersion: string;
      operational: {
        name: string;
        em: number;
        fitSlope: boolean;
        points: ConcentrationResponsePoint[];
        fit: { params: Record<string, number>; se: Record<string, number>; rss: number; dof: number; logTauOverKA: number; logTauOverKASe: number };
      }[];
    };
    for (const set of ref.operational) {
      const fit = () => fitOperationalModel(set.points, { em: set.em, fitSlope: set.fitSlope });
      it(`${set.name}: log τ, log KA${set.fitSlope ? ', n' : ''} within 1e-5 and RSS within 1e-9 relative of SciPy ${ref.scipyVersion}`, () => {
        const f = fit();
        expect(f.flags).to.deep.equal([]);
        expect(f.params.logTau.value).to.be.closeTo(set.fit.params.logTau, 1e-5);
        expect(f.params.logKA.value).to.be.closeTo(set.fit.params.logKA, 1e-5);
        if (set.fitSlope) expect(f.params.slope.value).to.be.closeTo(set.fit.params.n, 1e-5);
        rel(f.rss, set.fit.rss, 1e-9, 'RSS');
        expect(f.dof).to.equal(set.fit.dof);
      });
      it(`${set.name}: standard errors within 1e-3 relative of SciPy ${ref.scipyVersion}`, () => {
        const f = fit();
        rel(f.params.logTau.se!, set.fit.se.logTau, 1e-3, 'se log τ');
        rel(f.params.logKA.se!, set.fit.se.logKA, 1e-3, 'se log KA');
        if (set.fitSlope) rel(f.params.slope.se!, set.fit.se.n, 1e-3, 'se n');
      });
      it(`${set.name}: log(τ/KA) and its propagated SE equal SciPy's direct fit in (log(τ/KA), log KA) (1e-5; 1e-3 relative)`, () => {
        const f = fit();
        expect(f.logTauOverKA.value).to.be.closeTo(set.fit.logTauOverKA, 1e-5);
        rel(f.logTauOverKA.se!, set.fit.logTauOverKASe, 1e-3, 'se log(τ/KA)');
      });
    }
  });

  describe('flags', () => {
    it('a full agonist (τ 300, KA 10 µM): tau-undetermined, log τ and log KA reported as lower bounds below the truth, log(τ/KA) determined and its CI covers the truth', () => {
      const f = fitOperationalModel(simulate({ em: 100, tau: 300, ka: 1e-5 }, 3, 41), { em: 100 });
      expect(f.ok).to.equal(true);
      expect(f.flags).to.include('tau-undetermined');
      expect(f.params.logTau.qualifier).to.equal('>');
      expect(f.params.logTau.value).to.be.below(Math.log10(300)).and.above(0.5);
      expect(f.params.logTau.se).to.equal(null);
      expect(f.params.logKA.qualifier).to.equal('>');
      expect(f.params.logKA.value).to.be.below(-5);
      const [r0, r1] = f.logTauOverKA.ci95!;
      expect(Math.log10(300) + 5).to.be.within(r0, r1);
      expect(r1 - r0).to.be.below(0.3);
      expect(f.emax).to.equal(100);
    });

    it('the lower bound on log τ is the profile limit: refitting with log τ held there raises the RSS to the F threshold', () => {
      const pts = simulate({ em: 100, tau: 300, ka: 1e-5 }, 3, 41);
      const f = fitOperationalModel(pts, { em: 100 });
      const bound = f.params.logTau.value;
      // RSS with log τ fixed at `bound` and log KA re-fitted, by a fine grid search over log KA.
      const rssAt = (logTau: number) => {
        let best = Infinity;
        for (let k = -9; k <= 0; k += 0.0005) {
          const r = pts.reduce((s, p) => s + (p.response - operationalResponse(Math.log10(p.concentrationM), { em: 100, logTau, logKA: k })) ** 2, 0);
          if (r < best) best = r;
        }
        return best;
      };
      const t = tCritical95(f.dof);
      const threshold = f.rss * (1 + (t * t) / f.dof);
      rel(rssAt(bound), threshold, 2e-3, 'RSS at the bound');
      expect(rssAt(bound - 0.1)).to.be.above(threshold);
      expect(rssAt(LOG_TAU_MAX)).to.be.at.most(threshold);
    });

    it('a partial agonist (τ 1) is not flagged tau-undetermined', () => {
      const f = fitOperationalModel(simulate({ em: 100, tau: 1, ka: 1e-6 }, 3, 42), { em: 100 });
      expect(f.flags).to.not.include('tau-undetermined');
      expect(f.params.logTau.qualifier).to.equal('=');
    });

    it('noise around basal: no-response, ok = false, no parameters', () => {
      const g = gaussian(43);
      const f = fitOperationalModel(LOGS.flatMap((x) => [0, 1].map(() => ({ concentrationM: 10 ** x, response: 4 * g() }))), { em: 100 });
      expect(f.flags).to.deep.equal(['no-response']);
      expect(f.ok).to.equal(false);
      expect(f.params.logTau.value).to.be.NaN;
    });

    it('too few points: 3 concentrations for 2 free parameters need 3 distinct concentrations above zero', () => {
      const pts = [-8, -7].map((x) => ({ concentrationM: 10 ** x, response: 50 }));
      const f = fitOperationalModel([...pts, { concentrationM: 0, response: 0 }], { em: 100 });
      expect(f.flags).to.deep.equal(['too-few-points']);
      expect(f.ok).to.equal(false);
    });

    it('refuses a non-positive Em', () => {
      expect(() => fitOperationalModel(simulate({ em: 100, tau: 1, ka: 1e-6 }, 0, 1), { em: 0 })).to.throw(RangeError);
    });
  });

  // Kenakin et al. (2012) ΔΔlog(τ/KA); worked example from shared/REFERENCES.md §4 (COMPUTED).
  describe('bias factor ΔΔlog(τ/KA)', () => {
    const value = (tau: number, ka: number, se: number | null = 0.1, dof?: number) => ({ value: transductionCoefficient(tau, ka), se, dof });

    it('REFERENCES.md §4 example: ΔΔ = 0.954243 and bias factor 9.000 toward pathway 1', () => {
      const b = biasFactor({ pathway1: value(5, 1e-7), pathway2: value(0.5, 3e-7) }, { pathway1: value(10, 1e-7), pathway2: value(3, 1e-7) });
      expect(b.deltaPathway1.value).to.be.closeTo(-0.30103, 1e-6);
      expect(b.deltaPathway2.value).to.be.closeTo(-1.255273, 1e-6);
      expect(b.deltaDelta.value).to.be.closeTo(0.954243, 1e-6);
      expect(b.biasFactor.value).to.be.closeTo(9, 1e-9);
    });

    it('a ligand equal to the reference on both readouts gives ΔΔ = 0 and bias factor 1', () => {
      const b = biasFactor({ pathway1: value(10, 1e-7), pathway2: value(3, 1e-7) }, { pathway1: value(10, 1e-7), pathway2: value(3, 1e-7) });
      expect(b.deltaDelta.value).to.equal(0);
      expect(b.biasFactor.value).to.equal(1);
    });

    it('propagates the SE as √(sum of the four variances) and uses 1.96 without degrees of freedom', () => {
      const b = biasFactor(
        { pathway1: { value: 7, se: 0.1 }, pathway2: { value: 6, se: 0.2 } },
        { pathway1: { value: 8, se: 0.05 }, pathway2: { value: 7.5, se: 0.15 } },
      );
      const se = Math.sqrt(0.01 + 0.04 + 0.0025 + 0.0225);
      expect(b.deltaDelta.value).to.be.closeTo(0.5, 1e-12);
      expect(b.deltaDelta.se).to.be.closeTo(se, 1e-12);
      expect(b.deltaPathway1.se).to.be.closeTo(Math.sqrt(0.01 + 0.0025), 1e-12);
      expect(b.deltaDelta.dof).to.equal(null);
      expect(b.deltaDelta.ci95![1]).to.be.closeTo(0.5 + 1.959964 * se, 1e-6);
      expect(b.biasFactor.ci95![0]).to.be.closeTo(10 ** (0.5 - 1.959964 * se), 1e-5);
    });

    it('with degrees of freedom, uses t on the Welch–Satterthwaite dof (four equal SEs on ν dof each → 4ν)', () => {
      const v = { value: 7, se: 0.1, dof: 10 };
      const b = biasFactor({ pathway1: v, pathway2: v }, { pathway1: v, pathway2: v });
      expect(b.deltaDelta.dof).to.be.closeTo(40, 1e-9);
      expect(b.deltaDelta.ci95![1]).to.be.closeTo(tCritical95(40) * 0.2, 1e-12);
    });

    it('has no SE or CI when any input lacks an SE', () => {
      const b = biasFactor({ pathway1: value(5, 1e-7, null), pathway2: value(0.5, 3e-7) }, { pathway1: value(10, 1e-7), pathway2: value(3, 1e-7) });
      expect(b.deltaDelta.se).to.equal(null);
      expect(b.biasFactor.ci95).to.equal(null);
    });

    it('from fits of simulated data: an unbiased ligand (same τ/KA ratios as the reference, other noise) has a ΔΔ CI containing 0; a 10-fold biased one does not', () => {
      const fitR = (tau: number, ka: number, seed: number) => {
        const f = fitOperationalModel(simulate({ em: 100, tau, ka }, 3, seed), { em: 100 });
        return { value: f.logTauOverKA.value, se: f.logTauOverKA.se, dof: f.dof };
      };
      const reference = { pathway1: fitR(10, 1e-7, 51), pathway2: fitR(2, 1e-7, 52) };
      const same = biasFactor({ pathway1: fitR(1, 1e-8, 53), pathway2: fitR(0.2, 1e-8, 54) }, reference);
      expect(0).to.be.within(same.deltaDelta.ci95![0], same.deltaDelta.ci95![1]);
      const biased = biasFactor({ pathway1: fitR(1, 1e-8, 55), pathway2: fitR(0.2, 1e-7, 56) }, reference);
      expect(biased.deltaDelta.value).to.be.closeTo(1, 0.3);
      expect(biased.deltaDelta.ci95![0]).to.be.above(0);
    });
  });
});
