// Registry and batch numbers: CPD-000001 and CPD-000001-01 (prefix from settings).

export const DEFAULT_PREFIX = 'CPD';

export function isValidPrefix(prefix: string): boolean {
  return /^[A-Z][A-Z0-9]{1,9}$/.test(prefix);
}

export function registryNumber(prefix: string, n: number): string {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`compound number must be a positive whole number, got ${n}`);
  return `${prefix}-${String(n).padStart(6, '0')}`;
}

export function batchNumber(registry: string, sequence: number): string {
  if (!Number.isInteger(sequence) || sequence < 1) throw new RangeError(`batch sequence must be a positive whole number, got ${sequence}`);
  return `${registry}-${String(sequence).padStart(2, '0')}`;
}

/** True for a string shaped like a registry number (any prefix). */
export function looksLikeRegistryNumber(text: string): boolean {
  return /^[A-Z][A-Z0-9]{1,9}-\d{6,}$/i.test(text.trim());
}
