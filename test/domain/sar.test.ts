import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import { Molecule } from 'openchemlib';
import {
  aggregate,
  ligandEfficiency,
  lipophilicEfficiency,
  selectivityMargin,
  windowState,
  type Aggregate,
} from '../../api/src/domain/sar.js';
import { CoreError, decompose, parseCore } from '../../api/src/domain/rgroups.js';

const measured = (value: number): Aggregate => ({ value, qualifier: '=', sd: null, n: 1, censored: 0, flag: null });
const bound = (value: number, qualifier: '<' | '>'): Aggregate => ({ value, qualifier, sd: null, n: 1, censored: 0, flag: 'all-censored' });

describe('domain/sar', () => {
  describe('aggregate (mean of p-values = geometric mean of potencies, common practice)', () => {
    // Hand-worked: mean (7.0 + 7.3 + 7.6)/3 = 7.3; SD = sqrt((0.09 + 0 + 0.09)/2) = 0.3.
    it('pKi 7.0, 7.3, 7.6 → 7.3 ± 0.3 (n 3)', () => {
      const a = aggregate([7.0, 7.3, 7.6].map((value) => ({ value, qualifier: '=' as const })))!;
      expect(a.value).to.be.closeTo(7.3, 1e-12);
      expect(a.sd).to.be.closeTo(0.3, 1e-12);
      expect(a.n).to.equal(3);
      expect(a.qualifier).to.equal('=');
      expect(a.flag).to.equal(null);
    });
    it('equals the log of the geometric mean of the Ki values', () => {
      const kis = [3e-9, 12e-9, 50e-9];
      const geo = Math.cbrt(kis[0] * kis[1] * kis[2]);
      const a = aggregate(kis.map((k) => ({ value: -Math.log10(k), qualifier: '=' as const })))!;
      expect(a.value).to.be.closeTo(-Math.log10(geo), 1e-12);
    });
    it('one value: no SD', () => {
      const a = aggregate([{ value: 6.1, qualifier: '=' }])!;
      expect(a).to.include({ value: 6.1, n: 1, sd: null });
    });
    it('nothing to aggregate → null', () => {
      expect(aggregate([])).to.equal(null);
      expect(aggregate([{ value: Number.NaN, qualifier: '=' }])).to.equal(null);
    });
    it('branch 1 — measured and censored values: mean of the measured ones, censored counted and flagged', () => {
      const a = aggregate([{ value: 6.0, qualifier: '=' }, { value: 6.4, qualifier: '=' }, { value: 5, qualifier: '<' }])!;
      expect(a.value).to.be.closeTo(6.2, 1e-12);
      expect(a.n).to.equal(2);
      expect(a.censored).to.equal(1);
      expect(a.flag).to.equal('censored-excluded');
    });
    it('branch 2a — every value "<": the largest bound, which every result supports', () => {
      const a = aggregate([{ value: 5, qualifier: '<' }, { value: 4.5, qualifier: '<' }])!;
      expect(a).to.include({ value: 5, qualifier: '<', n: 2, flag: 'all-censored' });
      expect(a.sd).to.equal(null);
    });
    it('branch 2b — every value ">": the smallest bound', () => {
      const a = aggregate([{ value: 9, qualifier: '>' }, { value: 9.5, qualifier: '>' }])!;
      expect(a).to.include({ value: 9, qualifier: '>', flag: 'all-censored' });
    });
    it('branch 3 — "<" and ">" only: no value, flagged as conflicting', () => {
      const a = aggregate([{ value: 5, qualifier: '<' }, { value: 9, qualifier: '>' }])!;
      expect(a.value).to.equal(null);
      expect(a.flag).to.equal('conflicting-bounds');
    });
  });

  describe('selectivity Δp = p(primary) − p(other), fold = 10^Δ (common practice)', () => {
    // Hand-worked: pKi 8.5 at the primary target, 6.2 at an anti-target → Δ 2.3, 10^2.3 ≈ 199.5-fold.
    it('measured on both sides', () => {
      const m = selectivityMargin(measured(8.5), measured(6.2))!;
      expect(m.value).to.be.closeTo(2.3, 1e-12);
      expect(m.qualifier).to.equal('=');
      expect(m.fold).to.be.closeTo(199.526, 1e-3);
    });
    it('anti-target "<" → margin ">"', () => expect(selectivityMargin(measured(8), bound(5, '<'))).to.include({ value: 3, qualifier: '>' }));
    it('anti-target ">" → margin "<"', () => expect(selectivityMargin(measured(8), bound(9, '>'))).to.include({ value: -1, qualifier: '<' }));
    it('primary "<" → margin "<"', () => expect(selectivityMargin(bound(5, '<'), measured(6))).to.include({ value: -1, qualifier: '<' }));
    it('primary ">" and anti-target "<" → margin ">"', () => expect(selectivityMargin(bound(9, '>'), bound(5, '<'))).to.include({ value: 4, qualifier: '>' }));
    it('both "<" → no margin', () => expect(selectivityMargin(bound(5, '<'), bound(5, '<'))).to.equal(null));
    it('a missing side → no margin', () => expect(selectivityMargin(measured(8), null)).to.equal(null));
  });

  describe('selectivity window (2 = 100-fold)', () => {
    const m = (value: number, qualifier: '=' | '<' | '>' = '=') => ({ value, qualifier, fold: 10 ** value });
    it('just inside: Δ 1.99 is inside', () => expect(windowState(m(1.99), 2)).to.equal('inside'));
    it('at the boundary: exactly 100-fold is outside', () => expect(windowState(m(2), 2)).to.equal('outside'));
    it('just outside: Δ 2.01 is outside', () => expect(windowState(m(2.01), 2)).to.equal('outside'));
    it('"> 3" is outside, "> 1.5" uncertain', () => {
      expect(windowState(m(3, '>'), 2)).to.equal('outside');
      expect(windowState(m(1.5, '>'), 2)).to.equal('uncertain');
    });
    it('"< 1" is inside, "< 3" uncertain', () => {
      expect(windowState(m(1, '<'), 2)).to.equal('inside');
      expect(windowState(m(3, '<'), 2)).to.equal('uncertain');
    });
  });

  describe('efficiency', () => {
    // Hopkins et al. 2004 (Drug Discov Today 9:430): LE = 1.37·pKi/HA; hand-worked pKi 8, 25 heavy atoms → 0.4384.
    it('LE = 1.37 · pKi / HA', () => {
      expect(ligandEfficiency(8, 25)).to.be.closeTo(0.4384, 1e-12);
      expect(ligandEfficiency(8, 0)).to.equal(null);
    });
    // Leeson & Springthorpe 2007 (Nat Rev Drug Discov 6:881): LipE = pKi − cLogP; pKi 8.2, cLogP 3.1 → 5.1.
    it('LipE = pKi − cLogP', () => {
      expect(lipophilicEfficiency(8.2, 3.1)).to.be.closeTo(5.1, 1e-12);
      expect(lipophilicEfficiency(Number.NaN, 3)).to.equal(null);
    });
  });
});

/** Canonical form of a substituent with its attachment written as xenon, so `*` parses the same everywhere. */
function canonical(smiles: string): string {
  return Molecule.fromSmiles(smiles.replaceAll('*', '[Xe]')).getIDCode();
}

describe('domain/rgroups', () => {
  const demo = JSON.parse(readFileSync('fixtures/demo/tern-series.json', 'utf8')) as {
    series: { code: string; core: string; template: string; r1: Record<string, string>; r2: Record<string, string> }[];
  };
  // The enumerated demo series: every member built from the template gives back its own R1 and R2,
  // attachment atom included (the expected substituent is written with * where the core was).
  for (const s of demo.series) {
    it(`series ${s.code}: every enumerated member gives back its substituents`, () => {
      const core = parseCore(s.core);
      expect(core.attachments.map((a) => a.label)).to.deep.equal(['R1', 'R2']);
      let checked = 0;
      for (const [n1, r1] of Object.entries(s.r1)) {
        for (const [n2, r2] of Object.entries(s.r2)) {
          const smiles = s.template.replace('{R1}', r1).replace('{R2}', r2);
          const got = decompose(core, Molecule.fromSmiles(smiles));
          expect(got.problem, `${n1}/${n2}`).to.equal(null);
          // R1 is written before the ring atom it sits on (TA: "Fc1…", last atom attaches) or as a branch (TB: "c(F)…").
          const expected1 = r1 === '' ? 'H' : s.code === 'TA' ? `${r1.replaceAll('%11', '1')}*` : `*${r1}`;
          const expected2 = `*${r2.replaceAll('%11', '1')}`;
          if (expected1 === 'H') expect(got.groups!.R1).to.equal('H');
          else expect(canonical(got.groups!.R1), `${n1}: ${got.groups!.R1}`).to.equal(canonical(expected1));
          expect(canonical(got.groups!.R2), `${n2}: ${got.groups!.R2}`).to.equal(canonical(expected2));
          checked++;
        }
      }
      expect(checked).to.equal(Object.keys(s.r1).length * Object.keys(s.r2).length);
    });
  }
  it('a member without the core is reported apart, with the reason', () => {
    const core = parseCore(demo.series[0].core);
    expect(decompose(core, Molecule.fromSmiles('c1ccccc1CCN'))).to.deep.equal({ groups: null, problem: 'does not contain the core' });
  });
  it('a substituent on a core atom without an attachment point is reported apart', () => {
    expect(decompose(parseCore('[*:1]c1ccccc1'), Molecule.fromSmiles('Fc1ccccc1')).groups).to.deep.equal({ R1: '*F' });
    expect(decompose(parseCore('[*:1]c1ccncc1'), Molecule.fromSmiles('Fc1ccncc1Cl')).problem).to.match(/without an attachment point/);
  });
  it('substituents joined into a ring across two attachment points are reported apart', () => {
    const core = parseCore('[*:1]c1ccccc1[*:2]');
    const got = decompose(core, Molecule.fromSmiles('c1ccc2CCCc2c1'));
    expect(got.groups).to.equal(null);
    expect(got.problem).to.be.a('string');
  });
  it('a core without attachment points is refused with a message', () => {
    expect(() => parseCore('c1ccccc1')).to.throw(CoreError, /no attachment points/);
    expect(() => parseCore('')).to.throw(CoreError, /empty/);
  });
});
