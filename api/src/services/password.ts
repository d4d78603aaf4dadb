import argon2 from 'argon2';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT } from '../config.js';
import { parseCommonPasswords, passwordProblems } from '../domain/password-policy.js';

let common: Set<string> | undefined;

/** The well-known passwords shipped with Ligandry (api/data/common-passwords.txt), read once. */
export function commonPasswords(): ReadonlySet<string> {
  common ??= parseCommonPasswords(readFileSync(join(ROOT, 'api', 'data', 'common-passwords.txt'), 'utf8'));
  return common;
}

/** The password policy with the shipped list of well-known passwords. */
export function checkPassword(password: string, email: string): string[] {
  return passwordProblems(password, email, commonPasswords());
}

/** argon2id with the library's defaults (OWASP-recommended family for password storage). */
export function hashPassword(password: string): Promise<string> {
  return argon2.hash(password, { type: argon2.argon2id });
}

export function verifyPassword(hash: string, password: string): Promise<boolean> {
  return argon2.verify(hash, password).catch(() => false);
}
