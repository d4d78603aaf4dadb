import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT } from '../../api/src/config.js';
import { PASSWORD_MIN_LENGTH, parseCommonPasswords, passwordProblems } from '../../api/src/domain/password-policy.js';

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

describe('domain/password-policy: well-known passwords (api/data/common-passwords.txt)', () => {
  const common = parseCommonPasswords(readFileSync(join(ROOT, 'api', 'data', 'common-passwords.txt'), 'utf8'));
  const refused = 'is a well-known password that attackers try first; choose another';

  it('ships a list of at least 200 entries, comments left out', () => {
    expect(common.size).to.be.greaterThan(200);
    expect([...common].some((w) => w.startsWith('#'))).to.equal(false);
  });
  for (const pw of ['password1234', 'Password2024!', 'P@ssw0rd12345', 'qwertyqwerty', '123456789012', 'Iloveyou!!!!!', 'LetMeIn123456']) {
    it(`refuses "${pw}"`, () => {
      expect(passwordProblems(pw, 'ann@example.org', common)).to.include(refused);
    });
  }
  for (const pw of ['harbour-lantern-42', 'tidal-basin-seventeen', 'demo-password-1', 'fixture-password-1']) {
    it(`accepts "${pw}"`, () => {
      expect(passwordProblems(pw, 'ann@example.org', common)).to.deep.equal([]);
    });
  }
});
