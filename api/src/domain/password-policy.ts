// Password rules for accounts. Length follows common practice for user-chosen secrets
// (NIST SP 800-63B asks for at least 8 characters and allows long passphrases); Ligandry asks
// for 12 because the registry holds a company's most valuable data.

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 256;

const LEET: Record<string, string> = { '0': 'o', '1': 'i', '3': 'e', '4': 'a', '5': 's', '7': 't', '@': 'a', $: 's', '!': 'i' };

/** Parses the shipped list (api/data/common-passwords.txt): one a line, `#` comments. */
export function parseCommonPasswords(text: string): Set<string> {
  return new Set(
    text
      .split(/\r?\n/)
      .map((l) => l.trim().toLowerCase())
      .filter((l) => l && !l.startsWith('#')),
  );
}

/**
 * True when the password is a well-known one: on the list as it is, or once trailing digits and
 * symbols are dropped ("Summer2024!"), letter-for-digit swaps undone ("p@ssw0rd") or a repeated
 * stem collapsed ("qwertyqwerty").
 */
export function isCommonPassword(password: string, common: ReadonlySet<string>): boolean {
  const lower = password.toLowerCase();
  const candidates = new Set<string>([lower]);
  const stem = lower.replace(/[\d\W_]+$/, '');
  candidates.add(stem);
  for (const c of [...candidates]) candidates.add([...c].map((ch) => LEET[ch] ?? ch).join(''));
  for (const c of [...candidates]) {
    const repeated = /^(.+?)\1+$/.exec(c);
    if (repeated) candidates.add(repeated[1]);
  }
  for (const c of candidates) if (c.length >= 3 && common.has(c)) return true;
  return false;
}

/** Returns the reasons a password is refused, empty when it is acceptable. */
export function passwordProblems(password: string, email: string, common: ReadonlySet<string> = new Set()): string[] {
  const problems: string[] = [];
  if (password.length < PASSWORD_MIN_LENGTH) problems.push(`must be at least ${PASSWORD_MIN_LENGTH} characters long`);
  if (password.length > PASSWORD_MAX_LENGTH) problems.push(`must be at most ${PASSWORD_MAX_LENGTH} characters long`);
  const lower = password.toLowerCase();
  const address = email.trim().toLowerCase();
  const local = address.split('@')[0] ?? '';
  if (address && (lower === address || (local.length >= 4 && lower.includes(local)))) {
    problems.push('must not contain the e-mail address');
  }
  if (new Set(password).size < 4) problems.push('must use at least 4 different characters');
  if (isCommonPassword(password, common)) problems.push('is a well-known password that attackers try first; choose another');
  return problems;
}
