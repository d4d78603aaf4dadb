import { expect } from 'chai';
import { PASSWORD_MIN_LENGTH, passwordProblems } from '../../api/src/domain/password-policy.js';

describe('domain/password-policy', () => {
  it('accepts a long passphrase unrelated to the address', () => {
    expect(passwordProblems('harbour-lantern-42', 'ann@example.org')).to.deep.equal([]);
  });
  it(`refuses fewer than ${PASSWORD_MIN_LENGTH} characters`, () => {
    expect(passwordProblems('short-1', 'ann@example.org')).to.include(`must be at least ${PASSWORD_MIN_LENGTH} characters long`);
  });
  it('refuses the e-mail address itself, in any case', () => {
    expect(passwordProblems('Ann.Smith@Example.org', 'ann.smith@example.org')).to.include('must not contain the e-mail address');
  });
  it('refuses a password containing the address local part', () => {
    expect(passwordProblems('xx-annasmith-2026', 'annasmith@example.org')).to.include('must not contain the e-mail address');
  });
  it('refuses a password of one repeated character', () => {
    expect(passwordProblems('aaaaaaaaaaaaaaaa', 'ann@example.org')).to.include('must use at least 4 different characters');
  });
  it('refuses an over-long password', () => {
    expect(passwordProblems('ab1-'.repeat(70), 'ann@example.org')).to.include('must be at most 256 characters long');
  });
});
