import { expect } from 'chai';
import {
  chengPrusoffKi,
  chooseNormalisation,
  intrinsicActivity,
  leffDougallKB,
  normalise,
  NormalisationError,
  occupancy,
  operationalModel,
  pKBFromPIC50,
  pKiFromPIC50,
} from '../../api/src/domain/pharmacology.js';
import { fitFourPL, fourPL, type FourPlFit } from '../../api/src/domain/curve-fit.js';
import { deriveResultValues, plateauConstraints, pPotency } from '../../api/src/domain/result-values.js';

const rel = (a: number, b: number, tol: number) => expect(Math.abs(a - b) / Math.abs(b), `${a} vs ${b}`).to.be.below(tol);

describe('domain/pharmacology', () => {
  // Cheng & Prusoff (1973), Biochem Pharmacol 22:3099; worked examples in shared REFERENCES.md §2
  // (the 20 µM / 5 / 5 → 10 µM example also appears in public R documentation).
  describe('Cheng–Prusoff Ki = IC50 / (1 + [L]/Kd)', () => {
    const table: [number, number, number, number][] = [
      [100e-9, 1e-9, 1e-9, 50e-9],
      [20e-6, 5e-6, 5e-6, 10e-6],
      [50e-9, 2e-9, 0.5e-9, 10e-9],
      [10e-9, 0, 1e-9, 10e-9],
    ];
    for (const [ic50, l, kd, ki] of table) {
      it(`IC50 ${ic50}, [L] ${l}, Kd ${kd} → Ki ${ki}`, () => rel(chengPrusoffKi(ic50, l, kd), ki, 1e-12));
    }
    it('with [L] = Kd, Ki = IC50/2 and pKi = pIC50 + log10 2', () => {
      expect(chengPrusoffKi(3e-8, 2e-9, 2e-9)).to.be.closeTo(1.5e-8, 1e-20);
      expect(pKiFromPIC50(7.5, 2e-9, 2e-9)).to.be.closeTo(7.5 + Math.log10(2), 1e-12);
    });
    // Mass-action simulation (REFERENCES.md §2, COMPUTED): Ki 10 nM, [L] 2 nM, Kd 0.5 nM → IC50 = 50 nM.
    it('recovers Ki from the half-occupancy concentration of a mass-action simulation', () => {
      const ki = 10e-9, l = 2e-9, kd = 0.5e-9;
      const bound = (i: number) => (l / kd) / (1 + l / kd + i / ki);
      let lo = 1e-12, hi = 1e-3;
      for (let k = 0; k < 200; k++) {
        const mid = Math.sqrt(lo * hi);
        if (bound(mid) > bound(0) / 2) lo = mid;
        else hi = mid;
      }
      rel(chengPrusoffKi(lo, l, kd), ki, 1e-9);
    });
    it('refuses a non-positive IC50 or Kd', () => {
      expect(() => chengPrusoffKi(0, 1e-9, 1e-9)).to.throw(RangeError);
      expect(() => chengPrusoffKi(1e-9, 1e-9, 0)).to.throw(RangeError);
    });
  });

  // Leff & Dougall (1993) generalised Cheng–Prusoff relation (formula from memory of the paper);
  // checked here against its own derivation: a competitive antagonist shifts the agonist's EC50
  // by (1 + [B]/KB), and IC50 is the antagonist concentration that halves the response to [A].
  describe('generalised Cheng–Prusoff for functional antagonism', () => {
    it('reduces to IC50 / (1 + [A]/EC50) for a Hill slope of 1', () => {
      rel(leffDougallKB(1e-7, 1e-8, 1e-8, 1), 1e-7 / 2, 1e-12);
      rel(leffDougallKB(1e-7, 3e-8, 1e-8, 1), 1e-7 / 4, 1e-12);
    });
    for (const [n, a] of [[1, 1e-8], [2, 3e-8], [0.7, 1e-7], [1.5, 1e-9]] as const) {
      it(`recovers KB from a simulated antagonist IC50 (n = ${n}, [A] = ${a} M)`, () => {
        const ec50 = 1e-8, kb = 4e-9;
        const response = (b: number) => Math.pow(a, n) / (Math.pow(a, n) + Math.pow(ec50 * (1 + b / kb), n));
        const half = response(0) / 2;
        let lo = 1e-14, hi = 1;
        for (let k = 0; k < 200; k++) {
          const mid = Math.sqrt(lo * hi);
          if (response(mid) > half) lo = mid;
          else hi = mid;
        }
        rel(leffDougallKB(lo, a, ec50, n), kb, 1e-9);
        expect(pKBFromPIC50(-Math.log10(lo), a, ec50, n)).to.be.closeTo(-Math.log10(kb), 1e-9);
      });
    }
  });

  // Intrinsic activity α = Emax(test)/Emax(reference) over basal (common practice).
  describe('intrinsic activity', () => {
    it('is 1 for a compound reaching the reference maximum and 0.5 for half of it', () => {
      expect(intrinsicActivity(100, 100)).to.equal(1);
      expect(intrinsicActivity(50, 100)).to.equal(0.5);
      expect(intrinsicActivity(1550, 2100, 1000)).to.be.closeTo(0.5, 1e-12);
    });
    it('is negative for a fall below basal (inverse agonism)', () => {
      expect(intrinsicActivity(-20, 100)).to.equal(-0.2);
    });
    it('is undefined when the reference shows no response', () => {
      expect(() => intrinsicActivity(10, 0)).to.throw(RangeError);
    });
  });

  // Black & Leff (1983); check values from shared REFERENCES.md §4 (COMPUTED there by root finding).
  describe('operational model', () => {
    const rows: [number, number, number, number, number][] = [
      [1e-6, 10, 1, 90.909091, 9.090909e-8],
      [1e-6, 1, 1, 50, 5.0e-7],
      [1e-6, 0.5, 1, 33.333333, 6.666667e-7],
      [1e-7, 30, 1, 96.774194, 3.225806e-9],
      [1e-6, 10, 2, 99.009901, 1.098960885e-7],
      [1e-6, 3, 0.7, 68.331072, 1.502127646e-7],
    ];
    for (const [ka, tau, n, emax, ec50] of rows) {
      it(`KA ${ka}, τ ${tau}, n ${n}: Emax ${emax} and half of it at EC50 ${ec50}`, () => {
        const p = { em: 100, tau, ka, n };
        rel(operationalModel(1, p), emax, 1e-6);
        rel(operationalModel(ec50, p), emax / 2, 1e-6);
      });
    }
    it('gives nothing without efficacy or agonist', () => {
      expect(operationalModel(1e-6, { em: 100, tau: 0, ka: 1e-6 })).to.equal(0);
      expect(operationalModel(0, { em: 100, tau: 10, ka: 1e-6 })).to.equal(0);
      expect(occupancy(1e-6, 1e-6)).to.equal(0.5);
    });
  });

  describe('normalisation per run (common practice)', () => {
    it('agonist mode: 0 % at BASAL, 100 % at MAX', () => {
      const n = chooseNormalisation('functional-agonist', { basal: 1000, max: 10000, blank: null }, null);
      expect(normalise(1000, n)).to.equal(0);
      expect(normalise(10000, n)).to.equal(100);
      expect(normalise(5500, n)).to.equal(50);
    });
    it('agonist mode without controls uses the reference curve', () => {
      const n = chooseNormalisation('functional-agonist', { basal: null, max: null, blank: null }, { bottom: 200, top: 1200 });
      expect(normalise(700, n)).to.equal(50);
      expect(n.hundredFrom).to.match(/reference agonist/);
    });
    it('antagonist mode: % inhibition, 0 % at MAX (agonist alone), 100 % at BASAL', () => {
      const n = chooseNormalisation('functional-antagonist', { basal: 1000, max: 9000, blank: null }, null);
      expect(normalise(9000, n)).to.equal(0);
      expect(normalise(1000, n)).to.equal(100);
      expect(normalise(7000, n)).to.equal(25);
    });
    it('binding: % specific binding, 0 % at BLANK, 100 % at BASAL (total)', () => {
      const n = chooseNormalisation('binding', { basal: 5000, max: null, blank: 500 }, null);
      expect(normalise(2750, n)).to.equal(50);
    });
    it('says which controls are missing', () => {
      expect(() => chooseNormalisation('binding', { basal: 5000, max: null, blank: null }, null)).to.throw(NormalisationError, /BLANK/);
      expect(() => chooseNormalisation('functional-antagonist', { basal: 1, max: null, blank: null }, null)).to.throw(NormalisationError, /MAX/);
      expect(() => chooseNormalisation('functional-agonist', { basal: null, max: null, blank: null }, null)).to.throw(NormalisationError, /reference/);
    });
  });

  describe('values of a fitted curve', () => {
    const logs = [-11, -10.5, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5.5, -5];
    const curve = (p: { bottom: number; top: number; logEC50: number; hillSlope: number }) => logs.map((x) => ({ logConc: x, response: fourPL(x, p) }));
    const assay = { radioligandConcM: 1e-9, radioligandKdM: 1e-9, agonistConcM: 1e-8, agonistEc50M: 1e-8, agonistHill: 1 };

    it('binding: pIC50, pKi = pIC50 + log10(1 + [L]/Kd) with the same uncertainty', () => {
      const fit = fitFourPL(curve({ bottom: 0, top: 100, logEC50: -8, hillSlope: -1 }));
      const v = deriveResultValues('binding', fit, assay, null);
      expect(v.pIC50!.value).to.be.closeTo(8, 1e-6);
      expect(v.pKi!.value).to.be.closeTo(8 + Math.log10(2), 1e-6);
      expect(v.pKi!.se).to.equal(v.pIC50!.se);
    });
    it('antagonist mode: pKB by the generalised Cheng–Prusoff relation', () => {
      const fit = fitFourPL(curve({ bottom: 0, top: 100, logEC50: -7, hillSlope: 1 }));
      const v = deriveResultValues('functional-antagonist', fit, assay, null);
      expect(v.pKB!.value).to.be.closeTo(7 + Math.log10(2), 1e-6);
    });
    it('agonist mode: Emax and α against the reference Emax', () => {
      const fit = fitFourPL(curve({ bottom: 0, top: 40, logEC50: -8, hillSlope: 1 }));
      const v = deriveResultValues('functional-agonist', fit, assay, 80);
      expect(v.emax!.value).to.be.closeTo(40, 1e-6);
      expect(v.alpha!.value).to.be.closeTo(0.5, 1e-6);
    });
    it('a falling agonist-mode curve (inverse agonism) reports its high-concentration asymptote as Emax', () => {
      const fit = fitFourPL(curve({ bottom: -30, top: 0, logEC50: -8, hillSlope: -1 }));
      const v = deriveResultValues('functional-agonist', fit, assay, 100);
      expect(v.emax!.value).to.be.closeTo(-30, 1e-5);
      expect(v.alpha!.value).to.be.closeTo(-0.3, 1e-7);
    });
    it('flips the potency qualifier onto the p-scale: EC50 > bound becomes pEC50 < −log bound', () => {
      const fit = { potency: { qualifier: '>', logValue: -5 }, params: { logEC50: { value: -3, se: null, ci95: null, fixed: false } } } as unknown as FourPlFit;
      expect(pPotency(fit)).to.include({ value: 5, qualifier: '<' });
    });
    it('a flat curve reports only a bound on potency, no Emax or α', () => {
      const fit = fitFourPL(logs.map((x, i) => ({ logConc: x, response: (i % 3) - 1 })));
      expect(fit.flags).to.include('flat');
      const v = deriveResultValues('functional-agonist', fit, assay, 100);
      expect(v.pEC50!.qualifier).to.equal('<');
      expect(v.emax).to.equal(undefined);
      expect(v.alpha).to.equal(undefined);
    });
  });
});

describe('domain/result-values: plateaus held at their control level (common practice)', () => {
  const logs = [-11, -10, -9, -8, -7, -6, -5];
  const pts = (p: { bottom: number; top: number; logEC50: number; hillSlope: number }) => logs.map((x) => ({ logConc: x, response: fourPL(x, p) + ((x * 7) % 3) * 0.5 }));
  it('binding: an unreached bottom is held at 0 %', () => {
    const fit = fitFourPL(pts({ bottom: 0, top: 100, logEC50: -5.2, hillSlope: -1 }));
    expect(fit.flags).to.include('incomplete-bottom');
    expect(plateauConstraints('binding', fit)).to.deep.equal({ bottom: 0 });
  });
  it('agonist mode: an unreached top is never fixed (a partial agonist\'s maximum is the measurement)', () => {
    const fit = fitFourPL(pts({ bottom: 0, top: 60, logEC50: -5.2, hillSlope: 1 }));
    expect(fit.flags).to.include('incomplete-top');
    expect(plateauConstraints('functional-agonist', fit)).to.not.have.property('top');
  });
  it('a complete curve needs nothing fixed', () => {
    const fit = fitFourPL(pts({ bottom: 0, top: 100, logEC50: -8, hillSlope: -1 }));
    expect(plateauConstraints('binding', fit)).to.deep.equal({});
  });
});
