import { expect } from 'chai';
import { batchNumber, isValidPrefix, looksLikeRegistryNumber, registryNumber } from '../../api/src/domain/registry-numbers.js';

// Ligandry's own numbering scheme (DESIGN §2): PREFIX-000001 and PREFIX-000001-01.
describe('domain/registry-numbers', () => {
  const cases: [string, number, string][] = [
    ['CPD', 1, 'CPD-000001'],
    ['CPD', 42, 'CPD-000042'],
    ['TRN', 999_999, 'TRN-999999'],
    ['CPD', 1_234_567, 'CPD-1234567'],
  ];
  for (const [prefix, n, expected] of cases) {
    it(`${prefix} ${n} → ${expected}`, () => expect(registryNumber(prefix, n)).to.equal(expected));
  }
  it('numbers batches with two digits, more when needed', () => {
    expect(batchNumber('CPD-000001', 1)).to.equal('CPD-000001-01');
    expect(batchNumber('CPD-000001', 123)).to.equal('CPD-000001-123');
  });
  it('refuses numbers below 1 and fractions', () => {
    expect(() => registryNumber('CPD', 0)).to.throw(RangeError);
    expect(() => batchNumber('CPD-000001', 1.5)).to.throw(RangeError);
  });
  it('accepts prefixes of 2–10 capitals and digits starting with a letter', () => {
    expect(isValidPrefix('CPD')).to.equal(true);
    expect(isValidPrefix('X')).to.equal(false);
    expect(isValidPrefix('1AB')).to.equal(false);
    expect(isValidPrefix('cpd')).to.equal(false);
  });
  it('recognises registry-number-shaped text', () => {
    expect(looksLikeRegistryNumber('CPD-000123')).to.equal(true);
    expect(looksLikeRegistryNumber('cpd-000123')).to.equal(true);
    expect(looksLikeRegistryNumber('aspirin')).to.equal(false);
  });
});
