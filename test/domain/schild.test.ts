import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import { fourPL, tCritical95, type CurvePoint } from '../../api/src/domain/curve-fit.js';
import { fiellerInterval, schildAnalysis, type SchildCurve } from '../../api/src/domain/schild.js';
import { gaussian } from '../helpers/seeded-noise.js';

const rel = (a: number, b: number, tol: number, what = '') => expect(Math.abs(a - b) / Math.abs(b), `${what}: ${a} vs ${b}`).to.be.at.most(tol);

/** Curves with exact EC50s: control EC50 `ec50`, and EC50·DR at each [B], DR from `doseRatio`. */
function exactCurves(ec50: number, concs: number[], doseRatio: (b: number) => number): SchildCurve[] {
  return [{ antagonistConcM: 0, ec50M: ec50 }, ...concs.map((b) => ({ antagonistConcM: b, ec50M: ec50 * doseRatio(b) }))];
}

/** Curves whose log(DR − 1) are the given values at the given log[B] (control EC50 10 nM). */
function curvesFromY(logB: number[], y: number[]): SchildCurve[] {
  return [{ antagonistConcM: 0, ec50M: 1e-8 }, ...logB.map((x, i) => ({ antagonistConcM: 10 ** x, ec50M: 1e-8 * (1 + 10 ** y[i]) }))];
}

describe('domain/schild', () => {
  // Arunlakshana & Schild (1959); worked examples from shared/REFERENCES.md §3 (COMPUTED there).
  describe('REFERENCES.md §3 worked examples', () => {
    it('KB 10 nM, [B] 10 nM … 1 µM (DR 2, 4, 11, 31, 101): slope 1, pA2 = pKB = 8, no flags', () => {
      const r = schildAnalysis(exactCurves(1e-8, [1e-8, 3e-8, 1e-7, 3e-7, 1e-6], (b) => 1 + b / 1e-8));
      expect(r.points.map((p) => p.doseRatio)).to.satisfy((d: number[]) => d.every((v, i) => Math.abs(v - [2, 4, 11, 31, 101][i]) < 1e-9));
      expect(r.points[1].logDrMinus1).to.be.closeTo(0.4771, 1e-4);
      expect(r.slope!.value).to.be.closeTo(1, 1e-10);
      expect(r.intercept!.value).to.be.closeTo(8, 1e-9);
      expect(r.pA2!.value).to.be.closeTo(8, 1e-9);
      expect(r.pKB!.value).to.be.closeTo(8, 1e-9);
      expect(r.flags).to.deep.equal([]);
    });

    it('single point: DR 11 at [B] 10 nM gives pA2 = log(DR − 1) − log[B] = 9.000, flagged too-few-concentrations', () => {
      const r = schildAnalysis(exactCurves(5e-9, [1e-8], () => 11));
      expect(r.pA2!.value).to.be.closeTo(9, 1e-9);
      expect(r.slope).to.equal(null);
      expect(r.flags).to.deep.equal(['too-few-concentrations']);
    });

    it('log(DR − 1) = 0.8·log([B]/KB): slope 0.800, x-intercept −8 (pA2 8), slope-not-unity, no pKB', () => {
      const concs = [1e-8, 1e-7, 1e-6, 1e-5];
      const r = schildAnalysis(exactCurves(1e-8, concs, (b) => 1 + (b / 1e-8) ** 0.8));
      expect(r.slope!.value).to.be.closeTo(0.8, 1e-10);
      expect(r.pA2!.value).to.be.closeTo(8, 1e-9);
      expect(r.flags).to.include('slope-not-unity');
      expect(r.pKB).to.equal(null);
    });
  });

  describe('simulated antagonism', () => {
    // Gaddum/Schild: a competitive antagonist shifts the agonist EC50 to EC50·(1 + [B]/KB) with
    // the same maximum. Raw 4PL curves with seeded noise, fitted by fitFourPL inside schildAnalysis.
    const logs = Array.from({ length: 17 }, (_, i) => -11 + i * 0.5);
    const agonistCurve = (logEC50: number, top: number, seed: number): CurvePoint[] => {
      const g = gaussian(seed);
      return logs.flatMap((x) => [0, 1].map(() => ({ logConc: x, response: fourPL(x, { bottom: 0, top, logEC50, hillSlope: 1 }) + 3 * g() })));
    };
    const competitive = (kb: number, concs: number[], seed: number): SchildCurve[] =>
      [0, ...concs].map((b, i) => ({ antagonistConcM: b, points: agonistCurve(-8 + Math.log10(1 + b / kb), 100, seed + i), id: `curve-${i}` }));

    // 40 seeded runs of 5 curves (control + 4 antagonist concentrations, 17 concentrations in
    // duplicate, SD 3). Nominal coverage 95 %; ≥ 85 % is required, which catches gross errors in
    // the intervals (e.g. a wrong t or a missing √); the control-error propagation itself is
    // checked exactly by the next test.
    it('competitive antagonist (pKB 8.5), 40 seeded runs: slope CI contains 1 and pA2 CI contains 8.5 in ≥ 85 %, mean pA2 and pKB within 0.03 of 8.5, no flags in ≥ 85 %', () => {
      const runs = 40;
      let slopeCover = 0;
      let pA2Cover = 0;
      let clean = 0;
      let sumPA2 = 0;
      let sumPKB = 0;
      let nPKB = 0;
      for (let k = 0; k < runs; k++) {
        const r = schildAnalysis(competitive(10 ** -8.5, [1e-8, 1e-7, 1e-6, 1e-5], 200 + 10 * k));
        if (r.slope!.ci95![0] <= 1 && r.slope!.ci95![1] >= 1) slopeCover++;
        if (r.pA2!.ci95 && r.pA2!.ci95[0] <= 8.5 && r.pA2!.ci95[1] >= 8.5) pA2Cover++;
        if (!r.flags.length) clean++;
        sumPA2 += r.pA2!.value;
        if (r.pKB) {
          sumPKB += r.pKB.value;
          nPKB++;
        }
        expect(r.points.map((p) => p.id)).to.deep.equal(['curve-1', 'curve-2', 'curve-3', 'curve-4']);
      }
      expect(slopeCover / runs, 'slope coverage').to.be.at.least(0.85);
      expect(pA2Cover / runs, 'pA2 coverage').to.be.at.least(0.85);
      expect(clean / runs, 'runs without flags').to.be.at.least(0.85);
      expect(sumPA2 / runs).to.be.closeTo(8.5, 0.03);
      expect(sumPKB / nPKB).to.be.closeTo(8.5, 0.03);
    });

    it('propagates the control EC50 error shared by every dose ratio: exact data, control SE 0.05 → se(pKB) = 0.05·|mean c|, c = −DR/(DR − 1), with the normal quantile', () => {
      const curves = exactCurves(1e-8, [1e-8, 3e-8, 1e-7, 3e-7, 1e-6], (b) => 1 + b / 1e-8);
      curves[0].logEC50Se = 0.05;
      const r = schildAnalysis(curves);
      const cMean = [2, 4, 11, 31, 101].reduce((s, dr) => s - dr / (dr - 1), 0) / 5;
      expect(r.pKB!.se).to.be.closeTo(0.05 * Math.abs(cMean), 1e-12);
      expect(r.pKB!.ci95![1] - r.pKB!.value).to.be.closeTo(1.959964 * 0.05 * Math.abs(cMean), 1e-6);
      // Without the control's SE the same exact data have zero-width intervals and say so.
      const plain = schildAnalysis(exactCurves(1e-8, [1e-8, 3e-8, 1e-7, 3e-7, 1e-6], (b) => 1 + b / 1e-8));
      expect(plain.pKB!.se).to.be.closeTo(0, 1e-12);
      expect(plain.messages.join(' ')).to.match(/control EC50 has no standard error/);
    });

    // Allosteric ternary complex model (REFERENCES.md §7): EC50' = EC50·(1 + [B]/KB)/(1 + α[B]/KB);
    // with α = 0.1 the dose ratio cannot exceed 1/α = 10.
    it('allosteric modulator with limited cooperativity (α 0.1, KB 100 nM): saturating-shift and slope-not-unity, no pKB', () => {
      const kb = 1e-7;
      const alpha = 0.1;
      const r = schildAnalysis(exactCurves(1e-8, [1e-8, 1e-7, 1e-6, 1e-5], (b) => (1 + b / kb) / (1 + (alpha * b) / kb)));
      expect(r.flags).to.include('saturating-shift');
      expect(r.flags).to.include('slope-not-unity');
      expect(r.pKB).to.equal(null);
      expect(Math.max(...r.points.map((p) => p.doseRatio))).to.be.below(1 / alpha);
    });

    it('the same modulator from noisy raw curves is flagged saturating-shift too', () => {
      const kb = 1e-7;
      const curves: SchildCurve[] = [0, 1e-8, 1e-7, 1e-6, 1e-5].map((b, i) => ({ antagonistConcM: b, points: agonistCurve(-8 + Math.log10((1 + b / kb) / (1 + (0.1 * b) / kb)), 100, 300 + i) }));
      expect(schildAnalysis(curves).flags).to.include('saturating-shift');
    });
  });

  describe('flags and their thresholds (common practice)', () => {
    it('saturating-shift: a rise of exactly half of Δlog[B] over the top step is not flagged; just below half is', () => {
      expect(schildAnalysis(curvesFromY([-8, -7, -6], [0, 1, 1.5])).flags).to.not.include('saturating-shift');
      expect(schildAnalysis(curvesFromY([-8, -7, -6], [0, 1, 1.49])).flags).to.include('saturating-shift');
    });

    it('saturating-shift compares the top concentration with the highest one at least 0.5 log units below it', () => {
      // −6.2 is only 0.2 below the top: the comparison is with −7 (rise 0.4 over 1 log unit → flagged).
      const r = schildAnalysis(curvesFromY([-8, -7, -6.2, -6], [0, 1, 1.39, 1.4]));
      expect(r.flags).to.include('saturating-shift');
      expect(schildAnalysis(curvesFromY([-8, -7, -6.2, -6], [0, 1, 1.8, 2])).flags).to.not.include('saturating-shift');
    });

    it('slope-not-unity by |slope − 1| > 0.3 even when the wide CI contains 1; a slope of 1.25 with the same scatter is not flagged and gives pKB', () => {
      const steep = schildAnalysis(curvesFromY([-8, -7, -6], [0, 1.9, 2.7]));
      expect(steep.slope!.value).to.be.closeTo(1.35, 1e-9);
      expect(1).to.be.within(steep.slope!.ci95![0], steep.slope!.ci95![1]);
      expect(steep.flags).to.include('slope-not-unity');
      expect(steep.pKB).to.equal(null);
      const near = schildAnalysis(curvesFromY([-8, -7, -6], [0, 1.8, 2.5]));
      expect(near.slope!.value).to.be.closeTo(1.25, 1e-9);
      expect(near.flags).to.deep.equal([]);
      expect(near.pKB!.value).to.be.closeTo((8 + 8.8 + 8.5) / 3, 1e-9);
    });

    it('slope-not-unity when the 95 % CI excludes 1 although |slope − 1| ≤ 0.3', () => {
      const r = schildAnalysis(curvesFromY([-9, -8, -7, -6, -5], [0, 0.8, 1.61, 2.4, 3.2]));
      expect(r.slope!.value).to.be.closeTo(0.8, 0.01);
      expect(r.slope!.ci95![1]).to.be.below(1);
      expect(r.flags).to.deep.equal(['slope-not-unity']);
    });

    it('a precise slope of 1.03 whose CI excludes 1 is not flagged (|slope − 1| < 0.1); 0.88 is', () => {
      const y = (slope: number) => [-9, -8, -7, -6, -5].map((x) => slope * (x + 9) + 0.001 * (x % 2));
      const near = schildAnalysis(curvesFromY([-9, -8, -7, -6, -5], y(1.03)));
      expect(near.slope!.ci95![0]).to.be.above(1);
      expect(near.flags).to.not.include('slope-not-unity');
      const far = schildAnalysis(curvesFromY([-9, -8, -7, -6, -5], y(0.88)));
      expect(far.slope!.ci95![1]).to.be.below(1);
      expect(far.flags).to.include('slope-not-unity');
    });

    it('depressed-maximum: an agonist maximum below 80 % of the control is flagged, 80 % is not', () => {
      const curves = (emax: number): SchildCurve[] => [
        { antagonistConcM: 0, ec50M: 1e-8, emax: 100 },
        ...[1e-8, 1e-7, 1e-6].map((b) => ({ antagonistConcM: b, ec50M: 1e-8 * (1 + b / 1e-8), emax: b === 1e-6 ? emax : 100 })),
      ];
      expect(schildAnalysis(curves(80)).flags).to.deep.equal([]);
      expect(schildAnalysis(curves(79.9)).flags).to.deep.equal(['depressed-maximum']);
    });

    it('depressed-maximum from raw curves whose maximum falls to 50 %', () => {
      const logs = Array.from({ length: 17 }, (_, i) => -11 + i * 0.5);
      const curve = (logEC50: number, top: number): CurvePoint[] => logs.map((x) => ({ logConc: x, response: fourPL(x, { bottom: 0, top, logEC50, hillSlope: 1 }) }));
      const r = schildAnalysis([
        { antagonistConcM: 0, points: curve(-8, 100) },
        { antagonistConcM: 1e-8, points: curve(-7.7, 90) },
        { antagonistConcM: 1e-7, points: curve(-7.3, 70) },
        { antagonistConcM: 1e-6, points: curve(-7, 50) },
      ]);
      expect(r.controlEmax).to.be.closeTo(100, 1e-6);
      expect(r.flags).to.include('depressed-maximum');
    });

    it('too-few-concentrations with 2 antagonist concentrations: slope without SE or CI', () => {
      const r = schildAnalysis(exactCurves(1e-8, [1e-8, 1e-7], (b) => 1 + b / 1e-8));
      expect(r.flags).to.deep.equal(['too-few-concentrations']);
      expect(r.slope!.value).to.be.closeTo(1, 1e-10);
      expect(r.slope!.se).to.equal(null);
      expect(r.dof).to.equal(0);
    });

    it('leaves out and lists dose ratios ≤ 1, and flags them', () => {
      const curves: SchildCurve[] = [...exactCurves(1e-8, [1e-8, 1e-7, 1e-6, 1e-5], (b) => 1 + b / 1e-8), { antagonistConcM: 1e-9, ec50M: 0.9e-8, id: 'no-shift' }];
      const r = schildAnalysis(curves);
      expect(r.n).to.equal(4);
      expect(r.excluded).to.have.length(1);
      expect(r.excluded[0]).to.include({ id: 'no-shift', antagonistConcM: 1e-9 });
      expect(r.excluded[0].doseRatio).to.be.closeTo(0.9, 1e-12);
      expect(r.flags).to.deep.equal(['dose-ratio-not-above-1']);
      expect(r.pA2!.value).to.be.closeTo(8, 1e-9);
    });

    it('no control curve: nothing computed', () => {
      const r = schildAnalysis([{ antagonistConcM: 1e-8, ec50M: 2e-8 }]);
      expect(r.ok).to.equal(false);
      expect(r.flags).to.deep.equal(['no-control']);
    });

    it('several control curves: EC50(0) is their geometric mean', () => {
      const r = schildAnalysis([{ antagonistConcM: 0, ec50M: 1e-8 }, { antagonistConcM: 0, ec50M: 4e-8 }, { antagonistConcM: 1e-7, ec50M: 2e-7 }]);
      rel(r.controlEc50M!, 2e-8, 1e-12);
      rel(r.points[0].doseRatio, 10, 1e-12);
    });

    it('a slope not significantly different from 0 gives no Fieller CI for pA2 and says why', () => {
      const r = schildAnalysis(curvesFromY([-8, -7, -6], [0.5, 0.1, 0.6]));
      expect(r.pA2!.ci95).to.equal(null);
      expect(r.messages.join(' ')).to.match(/Fieller/);
    });
  });

  describe('Fieller interval', () => {
    it('reduces to value ± t·se(a)/|b| when b is known exactly (var(b) = 0)', () => {
      const ci = fiellerInterval(8, 2, 0.04, 0, 0, 2)!;
      expect(ci[0]).to.be.closeTo(4 - (2 * 0.2) / 2, 1e-12);
      expect(ci[1]).to.be.closeTo(4 + (2 * 0.2) / 2, 1e-12);
    });
    it('is asymmetric about the ratio when b is uncertain (wider on the side of small |b|)', () => {
      const [lo, hi] = fiellerInterval(8, 1, 0.01, 0.01, 0, 2)!;
      expect(hi - 8).to.be.greaterThan(8 - lo);
    });
  });

  describe('against SciPy (fixtures/reference/scipy-mechanism.json, make-scipy-mechanism.py)', () => {
    const ref = JSON.parse(readFileSync(new URL('../../fixtures/reference/scipy-mechanism.json', import.meta.url), 'utf8')) as {
      scipyVersion: string;
      schild: {
        name: string;
        controlEc50M: number;
        curves: { antagonistConcM: number; ec50M: number }[];
        linregress: { slope: number; intercept: number; stderr: number; interceptStderr: number };
        tCritical: number;
        dof: number;
        pA2: number;
        pA2SeDelta: number;
        pA2Fieller: [number, number];
        pKBSlope1: number;
        pKBSlope1Se: number;
      }[];
    };
    for (const set of ref.schild) {
      const run = () => schildAnalysis([{ antagonistConcM: 0, ec50M: set.controlEc50M }, ...set.curves]);
      it(`${set.name}: slope, intercept and their standard errors equal scipy.stats.linregress (SciPy ${ref.scipyVersion}; 1e-9 relative)`, () => {
        const r = run();
        rel(r.slope!.value, set.linregress.slope, 1e-9, 'slope');
        rel(r.intercept!.value, set.linregress.intercept, 1e-9, 'intercept');
        rel(r.slope!.se!, set.linregress.stderr, 1e-9, 'slope se');
        rel(r.intercept!.se!, set.linregress.interceptStderr, 1e-9, 'intercept se');
        expect(r.dof).to.equal(set.dof);
        rel(tCritical95(r.dof), set.tCritical, 1e-9, 't');
        rel(r.slope!.ci95![1], set.linregress.slope + set.tCritical * set.linregress.stderr, 1e-9, 'slope CI');
      });
      it(`${set.name}: pA2, its delta-method SE and Fieller CI, and the slope-1 pKB equal the NumPy/SciPy computation (1e-9 relative)`, () => {
        const r = run();
        rel(r.pA2!.value, set.pA2, 1e-9, 'pA2');
        rel(r.pA2!.se!, set.pA2SeDelta, 1e-7, 'pA2 se');
        rel(r.pA2!.ci95![0], set.pA2Fieller[0], 1e-9, 'Fieller low');
        rel(r.pA2!.ci95![1], set.pA2Fieller[1], 1e-9, 'Fieller high');
        // pKB (slope-1 fit) is withheld when the slope is not unity (the shallow set).
        if (set.name.startsWith('competitive')) {
          rel(r.pKB!.value, set.pKBSlope1, 1e-9, 'pKB');
          rel(r.pKB!.se!, set.pKBSlope1Se, 1e-9, 'pKB se');
        } else {
          expect(r.pKB).to.equal(null);
          expect(r.flags).to.include('slope-not-unity');
        }
      });
    }
  });
});
