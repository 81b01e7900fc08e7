/**
 * Modulus sizes a query may use. NIST SP 800-57 Part 1 Rev. 5, Table 2: a 2048-bit factoring
 * modulus gives about 112 bits of security, 3072 bits about 128.
 */
export const ALLOWED_MODULUS_BITS = [2048, 3072] as const;

/** Default modulus size for new key pairs. */
export const DEFAULT_MODULUS_BITS = 2048;

export type ModulusBits = (typeof ALLOWED_MODULUS_BITS)[number];

/** True when bits is one of ALLOWED_MODULUS_BITS. */
export function isAllowedModulusBits(bits: number): bits is ModulusBits {
  return (ALLOWED_MODULUS_BITS as readonly number[]).includes(bits);
}
