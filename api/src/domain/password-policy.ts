// Password rules for accounts. Length follows common practice for user-chosen secrets
// (NIST SP 800-63B asks for at least 8 characters and allows long passphrases); Ligandry asks
// for 12 because the registry holds a company's most valuable data.

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 256;

/** Returns the reasons a password is refused, empty when it is acceptable. */
export function passwordProblems(password: string, email: string): string[] {
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
  return problems;
}
