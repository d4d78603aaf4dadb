// Small mechanism rules over stored values (api/src/domain/mechanism-values.ts).
import { expect } from 'chai';
import { fitFourPL } from '../../api/src/domain/curve-fit.js';
import { basalChangeOf, summariseTransduction } from '../../api/src/domain/mechanism-values.js';

describe('basalChangeOf', () => {
  const logs = [-10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5.5, -5];

  it('is the fitted high-concentration asymptote of a curve falling below basal (an inverse agonist)', () => {
    // 4PL (REFERENCES.md §5) from 0 % down to −30 %, log EC50 −7.5, slope −1.
    const points = logs.map((x) => ({ logConc: x, response: -30 / (1 + 10 ** (-7.5 - x)) }));
    const fit = fitFourPL(points);
    expect(fit.ok).to.equal(true);
    expect(basalChangeOf(fit, points)).to.be.closeTo(-30, 1e-3);
  });

  it('is the mean response at the two highest concentrations of a flat curve, leaving out excluded points', () => {
    const points = logs.map((x, i) => ({ logConc: x, response: i % 2 ? 1 : -1 }));
    points.push({ logConc: -5, response: 50, excluded: true } as never);
    const flat = fitFourPL(points);
    expect(flat.ok).to.equal(false);
    expect(basalChangeOf(flat, points)).to.equal((-1 + 1) / 2);
    expect(basalChangeOf(null, [])).to.equal(null);
  });
});

describe('summariseTransduction', () => {
  it('keeps one value with its own standard error and interval', () => {
    expect(summariseTransduction([{ value: 7.2, qualifier: '=', se: 0.1, ci95: [7, 7.4] }])).to.deep.equal({ value: 7.2, se: 0.1, dof: null, n: 1, ci95: [7, 7.4] });
  });

  // Mean, SD/√n and Student's t on n − 1 dof: for 1, 2, 3 the mean is 2, SE 1/√3, t(2) = 4.302653
  // (standard t table, two-sided 95 %).
  it('pools several values as mean ± t·SD/√n and leaves out censored ones', () => {
    const s = summariseTransduction([{ value: 1, qualifier: '=' }, { value: 2, qualifier: '=' }, { value: 3, qualifier: '=' }, { value: 9, qualifier: '>' }])!;
    expect(s.value).to.equal(2);
    expect(s.n).to.equal(3);
    expect(s.dof).to.equal(2);
    expect(s.se).to.be.closeTo(1 / Math.sqrt(3), 1e-12);
    expect(s.ci95![1] - 2).to.be.closeTo(4.302653 / Math.sqrt(3), 1e-5);
    expect(summariseTransduction([{ value: 9, qualifier: '>' }])).to.equal(null);
  });
});
