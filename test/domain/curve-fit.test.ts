import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import { fitFourPL, fourPL, tCritical95, type CurvePoint, type FitFlag, type FourPlFit, type FourPlParams } from '../../api/src/domain/curve-fit.js';
import { leastSquares, residualSumOfSquares } from '../../api/src/domain/least-squares.js';
import { mulberry32 } from '../helpers/seeded-noise.js';

/** |actual − expected| ≤ rel·|expected| (or ≤ rel·floor when |expected| < floor). */
function expectClose(actual: number | null, expected: number, rel: number, floor = 0, what = ''): void {
  expect(actual, what).to.be.a('number');
  const allowed = rel * Math.max(Math.abs(expected), floor);
  expect(Math.abs((actual as number) - expected), `${what}: ${actual} vs ${expected} (allowed ${allowed.toExponential(1)})`).to.be.at.most(allowed);
}


const HALF_LOG = Array.from({ length: 11 }, (_, i) => -10 + i * 0.5); // 0.1 nM … 10 µM

/** Points on the curve plus Gaussian noise (Box–Muller over mulberry32), in duplicate by default. */
function simulate(p: FourPlParams, sd: number, seed: number, xs = HALF_LOG, replicates = 2): CurvePoint[] {
  const u = mulberry32(seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  return xs.flatMap((logConc) => Array.from({ length: replicates }, () => ({ logConc, response: fourPL(logConc, p) + sd * gauss() })));
}

const NAMES = ['bottom', 'top', 'logEC50', 'hillSlope'] as const;

// ---------------------------------------------------------------------------------------------
// NIST StRD nonlinear regression data sets and certified values, copied from
// shared/REFERENCES.md §1 (NIST/ITL Statistical Reference Datasets; GSL test_rat42.c /
// test_rat43.c and the NIST file headers).
interface NistCase {
  name: string;
  model: (b: number[]) => (x: number) => number;
  x: number[];
  y: number[];
  starts: Record<string, number[]>;
  params: number[];
  sd: number[];
  rss: number;
}

const NIST: NistCase[] = [
  {
    name: 'Rat42',
    model: (b) => (x) => b[0] / (1 + Math.exp(b[1] - b[2] * x)),
    x: [9, 14, 21, 28, 42, 57, 63, 70, 79],
    y: [8.93, 10.8, 18.59, 22.33, 39.35, 56.11, 61.73, 64.62, 67.08],
    starts: { 'start 1': [100, 1, 0.1], 'start 2': [75, 2.5, 0.07] },
    params: [7.2462237576e1, 2.6180768402e0, 6.7359200066e-2],
    sd: [1.7340283401e0, 8.8295217536e-2, 3.4465663377e-3],
    rss: 8.0565229338e0,
  },
  {
    // Certified SDs use dof = n − p = 11 (the vendored header's "9" is wrong; REFERENCES.md §1).
    // Start 1 (100, 10, 1, 1) also converges: the library alone stalls at RSS ≈ 3.2e5 from it,
    // and the least-squares polish finishes the job.
    name: 'Rat43',
    model: (b) => (x) => b[0] / Math.pow(1 + Math.exp(b[1] - b[2] * x), 1 / b[3]),
    x: Array.from({ length: 15 }, (_, i) => i + 1),
    y: [16.08, 33.83, 65.8, 97.2, 191.55, 326.2, 386.87, 520.53, 590.03, 651.92, 724.93, 699.56, 689.96, 637.56, 717.41],
    starts: { 'start 1': [100, 10, 1, 1], 'start 2': [700, 5, 0.75, 1.3] },
    params: [6.996415127e2, 5.2771253025e0, 7.5962938329e-1, 1.2792483859e0],
    sd: [1.6302297817e1, 2.0828735829e0, 1.9566123451e-1, 6.8761936385e-1],
    rss: 8.786404908e3,
  },
  {
    name: 'Misra1a',
    model: (b) => (x) => b[0] * (1 - Math.exp(-b[1] * x)),
    x: [77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0],
    y: [10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.4, 75.47, 81.78],
    starts: { 'start 1': [500, 1e-4], 'start 2': [250, 5e-4] },
    params: [2.3894212918e2, 5.5015643181e-4],
    sd: [2.7070075241e0, 7.2668688436e-6],
    rss: 1.2455138894e-1,
  },
];

describe('domain/least-squares', () => {
  describe('NIST StRD certified values (shared/REFERENCES.md §1)', () => {
    for (const c of NIST) {
      it(`${c.name}: the RSS at the certified parameters equals the certified RSS (relative 1e-9)`, () => {
        expectClose(residualSumOfSquares(c.model, c.params, c.x, c.y), c.rss, 1e-9);
      });
      for (const [label, start] of Object.entries(c.starts)) {
        const fit = () => leastSquares(c.model, c.x, c.y, start);
        it(`${c.name} from NIST ${label}: parameters to relative 1e-6 of the certified values`, () => {
          const r = fit();
          c.params.forEach((v, j) => expectClose(r.params[j], v, 1e-6, 0, `b${j + 1}`));
        });
        it(`${c.name} from NIST ${label}: residual sum of squares to relative 1e-9`, () => {
          expectClose(fit().rss, c.rss, 1e-9);
        });
        it(`${c.name} from NIST ${label}: standard deviations to relative 1e-4 (dof = n − p = ${c.x.length - c.params.length})`, () => {
          const r = fit();
          expect(r.dof).to.equal(c.x.length - c.params.length);
          c.sd.forEach((v, j) => expectClose(r.se[j], v, 1e-4, 0, `sd(b${j + 1})`));
        });
        it(`${c.name} from NIST ${label}: reports convergence`, () => {
          expect(fit().converged).to.equal(true);
        });
      }
    }
  });

  it('returns null standard errors and covariance when the parameters are not identifiable (y = a·b·x; construction)', () => {
    const r = leastSquares((p) => (x) => p[0] * p[1] * x, [1, 2, 3, 4], [2.1, 3.9, 6.2, 7.8], [1, 1]);
    expectClose(r.params[0] * r.params[1], 1.99, 1e-9); // least-squares slope through the origin: Σxy/Σx² = 59.7/30
    expect(r.se).to.deep.equal([null, null]);
    expect(r.covariance).to.equal(null);
  });

  it('returns null standard errors when no degrees of freedom are left (n = p; construction)', () => {
    const r = leastSquares((p) => (x) => p[0] + p[1] * x, [0, 1], [1, 3], [0, 0]);
    expect(r.dof).to.equal(0);
    expect(r.se).to.deep.equal([null, null]);
    expectClose(r.params[1], 2, 1e-9);
  });

  it('holds a parameter on its bound and still reports convergence (Misra1a with b1 ≤ 200; NIST data)', () => {
    const c = NIST[2];
    const r = leastSquares(c.model, c.x, c.y, c.starts['start 2'], { upper: [200, 1] });
    expect(r.params[0]).to.equal(200);
    expect(r.converged).to.equal(true);
    expect(r.rss).to.be.greaterThan(c.rss);
  });
});

// ---------------------------------------------------------------------------------------------
describe('domain/curve-fit', () => {
  // Printed to 6 decimals; the tolerance is one unit in the last place because at least one entry
  // is truncated rather than rounded (h = 2, X = −5: 100/(1 + 1e-4) = 99.9900009999…, printed
  // 99.990000).
  describe('fourPL check values (shared/REFERENCES.md §5, printed to 6 decimals)', () => {
    const columns: [string, FourPlParams, number[]][] = [
      ['B=0, T=100, logEC50=−7, h=1', { bottom: 0, top: 100, logEC50: -7, hillSlope: 1 }, [0.990099, 9.090909, 50, 90.909091, 99.009901]],
      ['B=0, T=100, logEC50=−7, h=2', { bottom: 0, top: 100, logEC50: -7, hillSlope: 2 }, [0.009999, 0.990099, 50, 99.009901, 99.99]],
      ['B=10, T=90, logEC50=−7.5, h=0.8', { bottom: 10, top: 90, logEC50: -7.5, hillSlope: 0.8 }, [14.748075, 32.77978, 67.22022, 85.251925, 89.207921]],
      ['B=100, T=0 (inhibition), logEC50=−7, h=1', { bottom: 100, top: 0, logEC50: -7, hillSlope: 1 }, [99.009901, 90.909091, 50, 9.090909, 0.990099]],
    ];
    for (const [name, p, values] of columns) {
      it(`${name} at X = −9 … −5`, () => {
        [-9, -8, -7, -6, -5].forEach((x, i) => expect(fourPL(x, p), `X = ${x}`).to.be.closeTo(values[i], 1e-6));
      });
    }
    it('EC80/EC50 = 4^(1/h) (REFERENCES.md §5 identity, h = 1.3 → 2.904846)', () => {
      const p = { bottom: 0, top: 100, logEC50: -7, hillSlope: 1.3 };
      expect(10 ** (Math.log10(4) / 1.3)).to.be.closeTo(2.904846, 5e-7);
      expect(fourPL(-7 + Math.log10(4) / 1.3, p)).to.be.closeTo(80, 1e-9);
    });
  });

  describe('recovery of known parameters', () => {
    it('recovers noise-free 13-point data exactly (REFERENCES.md §5: X = −10…−4, B=5, T=95, logEC50=−7.2, h=1.3)', () => {
      const truth = { bottom: 5, top: 95, logEC50: -7.2, hillSlope: 1.3 };
      const xs = Array.from({ length: 13 }, (_, i) => -10 + i * 0.5);
      const f = fitFourPL(xs.map((logConc) => ({ logConc, response: fourPL(logConc, truth) })));
      for (const k of NAMES) expectClose(f.params[k].value, truth[k], 1e-6, 1, k);
      expect(f.rSquared).to.be.closeTo(1, 1e-12);
      expect(f.flags).to.deep.equal([]);
    });

    it('reports a noise-free inhibition curve written as B=100, T=0, h=1 (REFERENCES.md §5) as Top=100, Bottom=0, nH=−1', () => {
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: fourPL(logConc, { bottom: 100, top: 0, logEC50: -7, hillSlope: 1 }) })));
      const expected = { bottom: 0, top: 100, logEC50: -7, hillSlope: -1 };
      for (const k of NAMES) expectClose(f.params[k].value, expected[k], 1e-6, 1, k);
    });

    const noisy: [string, FourPlParams, number][] = [
      ['increasing (agonist)', { bottom: 2, top: 98, logEC50: -7.3, hillSlope: 1.1 }, 11],
      ['decreasing (inhibitor, negative nH)', { bottom: 8, top: 102, logEC50: -6.6, hillSlope: -0.9 }, 12],
    ];
    for (const [name, truth, seed] of noisy) {
      it(`${name} with seeded noise (SD 4): every true value lies inside its 95 % CI`, () => {
        const f = fitFourPL(simulate(truth, 4, seed));
        for (const k of NAMES) {
          const ci = f.params[k].ci95!;
          expect(truth[k], k).to.be.within(ci[0], ci[1]);
        }
      });
      it(`${name} with seeded noise (SD 4): ok, no flags, Top > Bottom and the true sign of nH`, () => {
        const f = fitFourPL(simulate(truth, 4, seed));
        expect(f.ok).to.equal(true);
        expect(f.flags).to.deep.equal([]);
        expect(f.params.top.value).to.be.greaterThan(f.params.bottom.value);
        expect(Math.sign(f.params.hillSlope.value)).to.equal(Math.sign(truth.hillSlope));
      });
    }

    it('holds a fixed Top and Bottom exactly, without standard errors (dof = n − 2)', () => {
      const pts = simulate({ bottom: 0, top: 100, logEC50: -7, hillSlope: 1 }, 3, 21);
      const f = fitFourPL(pts, { top: 100, bottom: 0 });
      expect(f.params.top).to.deep.equal({ value: 100, se: null, ci95: null, fixed: true });
      expect(f.params.bottom).to.deep.equal({ value: 0, se: null, ci95: null, fixed: true });
      expect(f.params.logEC50.fixed).to.equal(false);
      expect(f.params.logEC50.se).to.be.a('number');
      expect(f.dof).to.equal(pts.length - 2);
      expect(f.params.logEC50.value).to.be.closeTo(-7, 0.1);
    });

    it('holds a fixed Hill slope exactly (dof = n − 3)', () => {
      const pts = simulate({ bottom: 5, top: 95, logEC50: -7.5, hillSlope: 1.4 }, 3, 22);
      const f = fitFourPL(pts, { hillSlope: 1 });
      expect(f.params.hillSlope).to.deep.equal({ value: 1, se: null, ci95: null, fixed: true });
      expect(f.dof).to.equal(pts.length - 3);
    });

    it('holds a fixed negative Hill slope on noise-free inhibition data and recovers the rest exactly', () => {
      const truth = { bottom: 10, top: 90, logEC50: -8, hillSlope: -1.5 };
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: fourPL(logConc, truth) })), { hillSlope: -1.5 });
      expect(f.params.hillSlope.value).to.equal(-1.5);
      for (const k of ['bottom', 'top', 'logEC50'] as const) expectClose(f.params[k].value, truth[k], 1e-6, 1, k);
    });

    it('ignores excluded points', () => {
      const pts = simulate({ bottom: 0, top: 100, logEC50: -7, hillSlope: 1 }, 4, 23);
      const withOutliers = [...pts, { logConc: -7, response: 500, excluded: true }, { logConc: -9, response: -300, excluded: true }];
      expect(fitFourPL(withOutliers)).to.deep.equal(fitFourPL(pts));
    });

    it('builds each 95 % CI as value ± t(dof)·se and R² as 1 − RSS/TSS', () => {
      const pts = simulate({ bottom: 0, top: 100, logEC50: -7, hillSlope: 1 }, 5, 24);
      const f = fitFourPL(pts);
      const t = tCritical95(f.dof);
      for (const k of NAMES) {
        const e = f.params[k];
        expect(e.ci95![0]).to.be.closeTo(e.value - t * e.se!, 1e-12 * Math.max(1, Math.abs(e.value)));
        expect(e.ci95![1]).to.be.closeTo(e.value + t * e.se!, 1e-12 * Math.max(1, Math.abs(e.value)));
      }
      const mean = pts.reduce((s, p) => s + p.response, 0) / pts.length;
      const tss = pts.reduce((s, p) => s + (p.response - mean) ** 2, 0);
      expect(f.rSquared).to.be.closeTo(1 - f.rss / tss, 1e-12);
    });
  });

  describe('against SciPy curve_fit (fixtures/reference/scipy-4pl.json, make-scipy-4pl.py)', () => {
    const ref = JSON.parse(readFileSync(new URL('../../fixtures/reference/scipy-4pl.json', import.meta.url), 'utf8')) as {
      scipyVersion: string;
      sets: { name: string; points: CurvePoint[]; fit: { params: FourPlParams; se: FourPlParams; rss: number; dof: number } }[];
    };
    for (const set of ref.sets) {
      const fit = () => fitFourPL(set.points);
      it(`${set.name}: parameters within 1e-4 relative of SciPy ${ref.scipyVersion} (1e-4 absolute below 1)`, () => {
        const f = fit();
        for (const k of NAMES) expectClose(f.params[k].value, set.fit.params[k], 1e-4, 1, k);
      });
      it(`${set.name}: standard errors within 1e-3 relative of SciPy ${ref.scipyVersion}`, () => {
        const f = fit();
        for (const k of NAMES) expectClose(f.params[k].se, set.fit.se[k], 1e-3, 0, k);
      });
      it(`${set.name}: RSS within 1e-9 relative and the same dof as SciPy ${ref.scipyVersion}`, () => {
        const f = fit();
        expectClose(f.rss, set.fit.rss, 1e-9);
        expect(f.dof).to.equal(set.fit.dof);
      });
    }
  });

  describe('flags', () => {
    const has = (f: FourPlFit, flag: FitFlag) => f.flags.includes(flag);

    it('flags seeded noise around a constant as flat: ok = false, potency > the highest concentration', () => {
      const f = fitFourPL(simulate({ bottom: 50, top: 50, logEC50: -7, hillSlope: 1 }, 5, 31));
      expect(f.flags).to.deep.equal(['flat']);
      expect(f.ok).to.equal(false);
      expect(f.potency).to.deep.equal({ qualifier: '>', logValue: -5 });
    });

    it('flags constant data as flat', () => {
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: 12 })));
      expect(f.flags).to.deep.equal(['flat']);
      expect(f.ok).to.equal(false);
    });

    it('does not flag a small but clear response as flat (20 % window, SD 3)', () => {
      const f = fitFourPL(simulate({ bottom: 0, top: 20, logEC50: -7, hillSlope: 1 }, 3, 32));
      expect(has(f, 'flat')).to.equal(false);
      expect(f.ok).to.equal(true);
    });

    it('censors a noise-free curve with its EC50 above the range (logEC50 −4.5, highest −5): above-range, potency > −5', () => {
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: fourPL(logConc, { bottom: 0, top: 100, logEC50: -4.5, hillSlope: 1 }) })));
      expectClose(f.params.logEC50.value, -4.5, 1e-6, 1);
      expect(has(f, 'above-range')).to.equal(true);
      expect(f.potency).to.deep.equal({ qualifier: '>', logValue: -5 });
    });

    it('censors a noisy partial curve with Top and Bottom fixed (true logEC50 −4): above-range, potency > −5', () => {
      const f = fitFourPL(simulate({ bottom: 0, top: 100, logEC50: -4, hillSlope: 1 }, 3, 33), { top: 100, bottom: 0 });
      expect(has(f, 'above-range')).to.equal(true);
      expect(f.potency).to.deep.equal({ qualifier: '>', logValue: -5 });
    });

    it('censors an inhibition curve with its IC50 below the range (logEC50 −10.5, lowest −10): below-range, potency < −10', () => {
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: fourPL(logConc, { bottom: 0, top: 100, logEC50: -10.5, hillSlope: -1 }) })));
      expect(has(f, 'below-range')).to.equal(true);
      expect(f.potency).to.deep.equal({ qualifier: '<', logValue: -10 });
    });

    it('flags a curve that stops short of its upper plateau as incomplete-top (logEC50 −5.3, highest −5)', () => {
      const f = fitFourPL(simulate({ bottom: 0, top: 100, logEC50: -5.3, hillSlope: 1 }, 3, 34));
      expect(f.flags).to.deep.equal(['incomplete-top']);
      expect(f.potency.qualifier).to.equal('=');
    });

    it('does not flag incomplete-top when the user fixed Top', () => {
      const f = fitFourPL(simulate({ bottom: 0, top: 100, logEC50: -5.3, hillSlope: 1 }, 3, 34), { top: 100 });
      expect(has(f, 'incomplete-top')).to.equal(false);
    });

    it('flags a curve that starts above its lower plateau as incomplete-bottom (logEC50 −9.7, lowest −10)', () => {
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: fourPL(logConc, { bottom: 0, top: 100, logEC50: -9.7, hillSlope: 1 }) })));
      expect(f.flags).to.deep.equal(['incomplete-bottom']);
    });

    it('flags an EC50 that falls in a gap between plateaus as ambiguous (CI wider than 2 log units)', () => {
      const f = fitFourPL(simulate({ bottom: 0, top: 100, logEC50: -7.2, hillSlope: 1.5 }, 2, 3, [-10, -9.5, -9, -5.5, -5]));
      expect(has(f, 'ambiguous')).to.equal(true);
      const ci = f.params.logEC50.ci95;
      if (ci) expect(ci[1] - ci[0]).to.be.greaterThan(2);
    });

    it('flags too few points (4 points for 4 free parameters): ok = false, no fit', () => {
      const f = fitFourPL([-9, -8, -7, -6].map((logConc) => ({ logConc, response: fourPL(logConc, { bottom: 0, top: 100, logEC50: -7.5, hillSlope: 1 }) })));
      expect(f.flags).to.deep.equal(['too-few-points']);
      expect(f.ok).to.equal(false);
      expect(Number.isNaN(f.params.logEC50.value)).to.equal(true);
    });

    it('counts only included points towards the minimum', () => {
      const pts = HALF_LOG.map((logConc, i) => ({ logConc, response: fourPL(logConc, { bottom: 0, top: 100, logEC50: -7.5, hillSlope: 1 }), excluded: i >= 4 }));
      expect(fitFourPL(pts).flags).to.deep.equal(['too-few-points']);
    });

    it('fits 3 points when Top and Bottom are fixed (2 free parameters need 3 points)', () => {
      const truth = { bottom: 0, top: 100, logEC50: -7.5, hillSlope: 1 };
      const f = fitFourPL([-9, -7.5, -6].map((logConc) => ({ logConc, response: fourPL(logConc, truth) })), { top: 100, bottom: 0 });
      expect(f.flags).to.deep.equal([]);
      expectClose(f.params.logEC50.value, -7.5, 1e-6, 1);
    });

    it('gives one plain sentence per flag', () => {
      const f = fitFourPL(HALF_LOG.map((logConc) => ({ logConc, response: fourPL(logConc, { bottom: 0, top: 100, logEC50: -4.5, hillSlope: 1 }) })));
      expect(f.flags.length).to.be.greaterThan(1);
      expect(f.messages).to.have.length(f.flags.length);
      for (const m of f.messages) expect(m).to.match(/^[A-Z].*\.$/);
    });
  });

  describe('tCritical95 (two-sided 95 %, i.e. the 97.5 % quantile of Student t)', () => {
    // NIST/SEMATECH e-Handbook of Statistical Methods, table of upper critical values of the t
    // distribution, α = 0.025 column (3 decimals).
    const table: [number, number][] = [[1, 12.706], [2, 4.303], [5, 2.571], [10, 2.228], [30, 2.042], [100, 1.984], [Infinity, 1.96]];
    for (const [dof, t] of table) {
      it(`dof ${dof} → ${t} (NIST/SEMATECH e-Handbook table)`, () => {
        expect(tCritical95(dof)).to.be.closeTo(t, 5e-4);
      });
    }
    it('dof 1 equals tan(0.475π) = 12.706204736 (Cauchy distribution, closed form)', () => {
      expect(tCritical95(1)).to.be.closeTo(Math.tan(0.475 * Math.PI), 1e-10);
    });
    it('dof 2 equals √(2/(α(2−α)) − 2) with α = 0.05 = 4.302652730 (closed form)', () => {
      expect(tCritical95(2)).to.be.closeTo(Math.sqrt(2 / (0.05 * 1.95) - 2), 1e-10);
    });
    // COMPUTED: scipy.stats.t.ppf(0.975, dof), SciPy 1.10.1.
    const scipy: [number, number][] = [[3, 3.182446305284263], [5, 2.5705818366147395], [10, 2.2281388519649385], [30, 2.0422724563012373], [1000, 1.9623390808264074]];
    for (const [dof, t] of scipy) {
      it(`dof ${dof} → ${t} to relative 1e-8 (SciPy 1.10.1 t.ppf)`, () => {
        expectClose(tCritical95(dof), t, 1e-8);
      });
    }
    it('is NaN without degrees of freedom', () => {
      expect(Number.isNaN(tCritical95(0))).to.equal(true);
    });
  });
});
