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

/**
 * What one product costs at each modulus size, in products at 2048 bits: the unit usage is
 * metered and billed in, so a 3072-bit query pays for its heavier products. `npm run bench`
 * measured the kernel at 1.8-2.0 times the 2048-bit time per product at 3072 bits (2026-12-02:
 * 3,436 / 1,752 ns general, 2,828 / 1,542 ns for the SDK's keys); 2 is the weight, rounded to
 * keep the unit whole.
 */
export const PRODUCT_WEIGHT: Readonly<Record<ModulusBits, number>> = { 2048: 1, 3072: 2 };
