import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import { fourPL, type CurvePoint } from '../../api/src/domain/curve-fit.js';
import {
  analyseAllostericRun,
  atcmFoldShift,
  atcmLogFoldShift,
  classifyModulator,
  DEFAULT_MODULATION_THRESHOLDS,
  fitAtcm,
  type ModulatorCurve,
} from '../../api/src/domain/allosteric.js';
import { gaussian } from '../helpers/seeded-noise.js';

const rel = (a: number, b: number, tol: number, what = '') => expect(Math.abs(a - b) / Math.abs(b), `${what}: ${a} vs ${b}`).to.be.at.most(tol);

/** Agonist EC50s under the ATCM (control EC50 `ec50`), optionally with seeded noise on every log EC50. */
function atcmCurves(ec50: number, concs: number[], kb: number, alpha: number, sd = 0, seed = 1): ModulatorCurve[] {
  const g = gaussian(seed);
  const noisy = (v: number) => v * 10 ** (sd * g());
  return [{ modulatorConcM: 0, ec50M: noisy(ec50), logEC50Se: sd > 0 ? sd : null }, ...concs.map((b) => ({ modulatorConcM: b, ec50M: noisy(ec50 / atcmFoldShift(b, kb, alpha)) }))];
}

describe('domain/allosteric', () => {
  // Allosteric ternary complex model (Ehlert 1988), Christopoulos/May convention; check values
  // from shared/REFERENCES.md §7 (COMPUTED there from the mass-action scheme). FS = 1/DR.
  describe('ATCM fold-shift (REFERENCES.md §7 check values, FS = 1/DR)', () => {
    const rows: [number, number, number, number][] = [
      // KB, α, [B], DR
      [1e-7, 10, 1e-7, 0.181818],
      [1e-7, 0.1, 1e-6, 5.5],
      [1e-7, 1, 1e-6, 1],
      [1e-7, 0, 1e-6, 11],
      [1e-6, 3, 1e-4, 0.335548],
    ];
    for (const [kb, alpha, b, dr] of rows) {
      it(`KB ${kb}, α ${alpha}, [B] ${b}: DR ${dr}`, () => {
        rel(1 / atcmFoldShift(b, kb, alpha), dr, 2e-6);
        if (alpha > 0) expect(atcmLogFoldShift(Math.log10(b), Math.log10(kb), Math.log10(alpha))).to.be.closeTo(Math.log10(atcmFoldShift(b, kb, alpha)), 1e-12);
      });
    }
    it('tends to α at saturating [B] (the ceiling) and to 1 at [B] → 0', () => {
      expect(atcmFoldShift(1e3, 1e-7, 10)).to.be.closeTo(10, 1e-6);
      expect(atcmFoldShift(1e-15, 1e-7, 10)).to.be.closeTo(1, 1e-6);
      expect(atcmLogFoldShift(300, -7, -1)).to.be.closeTo(-1, 1e-12);
    });
    it('α = 0 is competitive: DR = 1 + [B]/KB (Schild)', () => {
      for (const b of [1e-9, 1e-7, 1e-5]) expect(1 / atcmFoldShift(b, 1e-7, 0)).to.be.closeTo(1 + b / 1e-7, 1e-9);
    });
  });

  describe('fitting log KB and log α to fold-shifts', () => {
    const concs = [1e-8, 3e-8, 1e-7, 3e-7, 1e-6, 1e-5];
    for (const [kb, alpha] of [[1e-7, 10], [3e-7, 0.1], [1e-6, 30]] as const) {
      it(`recovers exact shifts: KB ${kb}, α ${alpha}`, () => {
        const r = analyseAllostericRun({ curves: atcmCurves(1e-7, concs, kb, alpha) });
        expect(r.atcm.flags).to.deep.equal([]);
        expect(r.atcm.logKB.value).to.be.closeTo(Math.log10(kb), 1e-6);
        expect(r.atcm.logAlpha.value).to.be.closeTo(Math.log10(alpha), 1e-6);
      });
    }

    // 40 seeded runs, SD 0.05 on every log EC50 (control included, its SE passed). Nominal 95 %;
    // ≥ 85 % required.
    it('recovers KB and α from noisy EC50s: 95 % CIs cover the truth in ≥ 85 % of 40 seeded runs (PAM α 10 and NAM α 0.1)', () => {
      for (const [kb, alpha] of [[1e-7, 10], [3e-7, 0.1]] as const) {
        let coverKB = 0;
        let coverAlpha = 0;
        const runs = 40;
        for (let k = 0; k < runs; k++) {
          const r = analyseAllostericRun({ curves: atcmCurves(1e-7, concs, kb, alpha, 0.05, 400 + k) });
          const [k0, k1] = r.atcm.logKB.ci95!;
          const [a0, a1] = r.atcm.logAlpha.ci95!;
          if (Math.log10(kb) >= k0 && Math.log10(kb) <= k1) coverKB++;
          if (Math.log10(alpha) >= a0 && Math.log10(alpha) <= a1) coverAlpha++;
        }
        expect(coverKB / runs, `log KB coverage, α ${alpha}`).to.be.at.least(0.85);
        expect(coverAlpha / runs, `log α coverage, α ${alpha}`).to.be.at.least(0.85);
      }
    });

    it('propagates the control EC50 error: exact shifts with control SE 0.05 give se(log α) = 0.05 when the shift has reached its ceiling', () => {
      // With every [B] ≫ KB the fold-shift is α at each point, so a shift of the control moves log α one for one.
      const curves = atcmCurves(1e-7, [1e-3, 3e-3, 1e-2], 1e-8, 10);
      curves[0].logEC50Se = 0.05;
      const r = analyseAllostericRun({ curves });
      expect(r.atcm.logAlpha.se).to.be.closeTo(0.05, 1e-4);
      expect(r.atcm.logAlpha.ci95![1] - r.atcm.logAlpha.value).to.be.closeTo(1.959964 * r.atcm.logAlpha.se!, 1e-6);
    });

    it('too-few-concentrations with one modulator concentration: no fit', () => {
      const r = fitAtcm([{ modulatorConcM: 1e-6, foldShift: 5 }]);
      expect(r.ok).to.equal(false);
      expect(r.flags).to.deep.equal(['too-few-concentrations']);
    });

    it('two concentrations: an exact fit without confidence intervals, both parameters flagged undetermined', () => {
      const r = fitAtcm([1e-7, 1e-6].map((b) => ({ modulatorConcM: b, foldShift: atcmFoldShift(b, 1e-7, 10) })));
      expect(r.dof).to.equal(0);
      expect(r.logAlpha.value).to.be.closeTo(1, 1e-5);
      expect(r.logAlpha.ci95).to.equal(null);
      expect(r.flags).to.include.members(['kb-undetermined', 'alpha-undetermined']);
    });

    it('flags KB and α undetermined when every [B] is far below KB (shifts still rising, no ceiling reached)', () => {
      const g = gaussian(9);
      const shifts = [1e-10, 3e-10, 1e-9, 3e-9].map((b) => ({ modulatorConcM: b, foldShift: atcmFoldShift(b, 1e-6, 30) * 10 ** (0.01 * g()) }));
      const r = fitAtcm(shifts);
      expect(r.flags).to.include('alpha-undetermined');
    });

    it('flags KB undetermined when there is no shift at all (α = 1: KB drops out of the model)', () => {
      const g = gaussian(10);
      const r = fitAtcm([1e-8, 1e-7, 1e-6, 1e-5].map((b) => ({ modulatorConcM: b, foldShift: 10 ** (0.03 * g()) })));
      expect(r.flags).to.include('kb-undetermined');
    });
  });

  describe('against SciPy curve_fit (fixtures/reference/scipy-mechanism.json, make-scipy-mechanism.py)', () => {
    const ref = JSON.parse(readFileSync(new URL('../../fixtures/reference/scipy-mechanism.json', import.meta.url), 'utf8')) as {
      scipyVersion: string;
      atcm: { name: string; controlEc50M: number; curves: { modulatorConcM: number; ec50M: number }[]; fit: { params: { logKB: number; logAlpha: number }; se: { logKB: number; logAlpha: number }; rss: number; dof: number } }[];
    };
    for (const set of ref.atcm) {
      it(`${set.name}: log KB, log α within 1e-5, SEs within 1e-3 relative, RSS within 1e-9 relative of SciPy ${ref.scipyVersion}`, () => {
        const r = analyseAllostericRun({ curves: [{ modulatorConcM: 0, ec50M: set.controlEc50M }, ...set.curves] });
        expect(r.atcm.flags).to.deep.equal([]);
        expect(r.atcm.logKB.value).to.be.closeTo(set.fit.params.logKB, 1e-5);
        expect(r.atcm.logAlpha.value).to.be.closeTo(set.fit.params.logAlpha, 1e-5);
        rel(r.atcm.logKB.se!, set.fit.se.logKB, 1e-3, 'se log KB');
        rel(r.atcm.logAlpha.se!, set.fit.se.logAlpha, 1e-3, 'se log α');
        rel(r.atcm.rss, set.fit.rss, 1e-9, 'RSS');
        expect(r.atcm.dof).to.equal(set.fit.dof);
      });
    }
  });

  describe('run analysis', () => {
    it('fold-shift = EC50(0)/EC50([B]) (> 1 potentiation), Emax change and the modulator-alone α against the control Emax', () => {
      const r = analyseAllostericRun({
        curves: [
          { modulatorConcM: 0, ec50M: 1e-7, emax: 100 },
          { modulatorConcM: 1e-6, ec50M: 2.5e-8, emax: 110, id: 'b1' },
        ],
        modulatorAlone: { emax: 15 },
      });
      expect(r.shifts).to.have.length(1);
      expect(r.shifts[0].foldShift).to.be.closeTo(4, 1e-12);
      expect(r.shifts[0].emaxChange).to.be.closeTo(0.1, 1e-12);
      expect(r.shifts[0].id).to.equal('b1');
      expect(r.modulatorAlone!.alpha).to.be.closeTo(0.15, 1e-12);
      expect(r.classification.call).to.equal('positive allosteric modulator');
    });

    it('uses the reference Emax, when given, for the modulator-alone α', () => {
      const r = analyseAllostericRun({ curves: [{ modulatorConcM: 0, ec50M: 1e-7, emax: 80 }], modulatorAlone: { emax: 20 }, referenceEmax: 100 });
      expect(r.modulatorAlone!.alpha).to.be.closeTo(0.2, 1e-12);
      expect(r.classification.call).to.equal('allosteric agonist');
    });

    it('fits raw agonist curves and a modulator-alone curve (simulated PAM, KB 100 nM, α 10, modulator alone reaching 40 %)', () => {
      const logs = Array.from({ length: 15 }, (_, i) => -11 + i * 0.5);
      const g = gaussian(77);
      const curve = (logEC50: number, top: number): CurvePoint[] => logs.flatMap((x) => [0, 1].map(() => ({ logConc: x, response: fourPL(x, { bottom: 0, top, logEC50, hillSlope: 1 }) + 2 * g() })));
      const curves: ModulatorCurve[] = [0, 1e-8, 1e-7, 1e-6, 1e-5].map((b) => ({ modulatorConcM: b, points: curve(-7 + Math.log10(1 / atcmFoldShift(b, 1e-7, 10)), 100) }));
      const r = analyseAllostericRun({ curves, modulatorAlone: { points: curve(-6, 40) } });
      expect(r.ok).to.equal(true);
      expect(r.shifts[3].foldShift).to.be.closeTo(atcmFoldShift(1e-5, 1e-7, 10), 1.5);
      expect(10 ** r.atcm.logAlpha.value).to.be.closeTo(10, 3);
      expect(r.modulatorAlone!.alpha).to.be.closeTo(0.4, 0.05);
      expect(r.classification.call).to.equal('allosteric agonist');
      expect(r.classification.rule).to.match(/ago-PAM/);
    });

    it('a modulator alone with a flat curve has α 0', () => {
      const logs = Array.from({ length: 11 }, (_, i) => -10 + i * 0.5);
      const g = gaussian(78);
      const r = analyseAllostericRun({ curves: [{ modulatorConcM: 0, ec50M: 1e-7, emax: 100 }], modulatorAlone: { points: logs.map((x) => ({ logConc: x, response: 2 * g() })) } });
      expect(r.modulatorAlone).to.deep.equal({ emax: 0, alpha: 0 });
    });

    it('without a control curve there are no fold-shifts', () => {
      const r = analyseAllostericRun({ curves: [{ modulatorConcM: 1e-6, ec50M: 1e-8 }] });
      expect(r.ok).to.equal(false);
      expect(r.shifts).to.deep.equal([]);
      expect(r.messages.join(' ')).to.match(/No control curve/);
    });
  });

  describe('classification (thresholds: common practice, not a published standard)', () => {
    const th = DEFAULT_MODULATION_THRESHOLDS;
    it('defaults: PAM fold-shift 2, NAM 0.5, Emax change 20 %, allosteric agonist α 0.2', () => {
      expect(th).to.deep.equal({ pamFoldShift: 2, namFoldShift: 0.5, emaxChange: 0.2, allostericAgonistAlpha: 0.2 });
    });
    it('fold-shift exactly 2 → PAM; 1.99 → neutral', () => {
      expect(classifyModulator({ foldShifts: [2] }).call).to.equal('positive allosteric modulator');
      expect(classifyModulator({ foldShifts: [1.99] }).call).to.equal('neutral');
    });
    it('fold-shift exactly 0.5 → NAM; 0.51 → neutral', () => {
      expect(classifyModulator({ foldShifts: [0.5] }).call).to.equal('negative allosteric modulator');
      expect(classifyModulator({ foldShifts: [0.51] }).call).to.equal('neutral');
    });
    it('Emax change +20 % → PAM, +19.9 % → neutral; −20 % → NAM, −19.9 % → neutral', () => {
      expect(classifyModulator({ foldShifts: [1], emaxChanges: [0.2] }).call).to.equal('positive allosteric modulator');
      expect(classifyModulator({ foldShifts: [1], emaxChanges: [0.199] }).call).to.equal('neutral');
      expect(classifyModulator({ foldShifts: [1], emaxChanges: [-0.2] }).call).to.equal('negative allosteric modulator');
      expect(classifyModulator({ foldShifts: [1], emaxChanges: [-0.199] }).call).to.equal('neutral');
    });
    it('modulator alone α exactly 0.2 → allosteric agonist; 0.19 → not', () => {
      expect(classifyModulator({ foldShifts: [1], aloneAlpha: 0.2 }).call).to.equal('allosteric agonist');
      expect(classifyModulator({ foldShifts: [1], aloneAlpha: 0.19 }).call).to.equal('neutral');
    });
    it('a potentiating shift with a depressed Emax is mixed → inconclusive', () => {
      expect(classifyModulator({ foldShifts: [5], emaxChanges: [-0.5] }).call).to.equal('inconclusive');
    });
    it('an ATCM α whose CI lies above 1 makes a PAM even below the fold-shift threshold', () => {
      const c = classifyModulator({ foldShifts: [1.6], logAlpha: { value: 0.25, se: 0.05, ci95: [0.15, 0.35], fixed: false } });
      expect(c.call).to.equal('positive allosteric modulator');
      expect(c.rule).to.match(/ATCM α/);
    });
    it('thresholds can be overridden: fold-shift 1.6 is a PAM at a threshold of 1.5', () => {
      expect(classifyModulator({ foldShifts: [1.6] }, { pamFoldShift: 1.5 }).call).to.equal('positive allosteric modulator');
    });
    it('the rule says what decided: "fold-shift 5.50 ≥ 2.00 → positive allosteric modulator"', () => {
      expect(classifyModulator({ foldShifts: [5.5] }).rule).to.equal('fold-shift 5.50 ≥ 2.00 → positive allosteric modulator');
    });
    it('nothing measured → inconclusive', () => {
      expect(classifyModulator({ foldShifts: [] }).call).to.equal('inconclusive');
    });
  });
});
