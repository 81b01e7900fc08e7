import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { BLOCK_STEPS, MIN_ONES_LIMBS, SCHEDULE_ENTRY_WORDS } from '../../../core/montgomery/ones-schedule.ts';
import { generateKeyPair } from '../../../core/pir/keys.ts';
import { LIMB_BITS, PAIR_STEPS, SCHEDULE_ENTRY } from '../../../scripts/montgomery/generate-kernel.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { back, big, jsbnProduct, operand, products } from './kernel-products.ts';

// multiplyOnes: the kernel's path for moduli n = h 2^(13m) - 1. Outside references: native BigInt
// `(a * b) % n` and jsbn (multiply then mod); every result is compared with one or both.

let module: WebAssembly.Module;
beforeAll(async () => {
  module = await loadKernelModuleNode(2048);
});

/** n of exactly `bits` bits whose low `ones` bits are one and the bit above them zero. */
const withLowOnes = (top: bigint, bits: number, ones: number) => {
  const low = (1n << BigInt(ones)) - 1n;
  return ((top | (1n << BigInt(bits - 1))) & ~(low | (1n << BigInt(ones)))) | low;
};

describe('multiplyOnes schedule and module agree', () => {
  it('uses the module\'s steps per block and entry size', () => {
    expect(BLOCK_STEPS).toBe(PAIR_STEPS);
    expect(SCHEDULE_ENTRY_WORDS * 4).toBe(SCHEDULE_ENTRY);
  });
});

for (const bits of [2048, 3072] as const) {
  const limbs = Math.ceil((bits + 2) / LIMB_BITS);
  describe(`Montgomery kernel, moduli with all-ones low limbs, ${bits} bits`, () => {
    it('matches BigInt and jsbn for any count of ones limbs from 4 to L - 1 (fast-check, seeded)', () => {
      // The operands depend on n, so they are drawn inside the run through fc.gen(): the run's seed
      // covers them too, and fast-check prints the seed and the counterexample on failure. They are
      // not shrunk (shrinking twelve 2048-bit operands one kernel at a time ran for minutes).
      fc.assert(
        fc.property(
          fc.bigInt({ min: 0n, max: (1n << BigInt(bits)) - 1n }),
          fc.integer({ min: MIN_ONES_LIMBS, max: limbs - 1 }),
          fc.integer({ min: 0, max: LIMB_BITS - 1 }),
          fc.gen(),
          (top, m, extra, g) => {
            const ones = Math.min(m * LIMB_BITS + extra, bits - 2);
            const n = withLowOnes(top, bits, ones);
            const pairs = Array.from({ length: 6 }, () => g(() => fc.noShrink(fc.tuple(operand(n), operand(n)))));
            const k = createMontgomeryKernel(module, n);
            expect(k.onesLimbs).toBe(Math.floor(ones / LIMB_BITS));
            const got = products(k, pairs);
            pairs.forEach(([a, b], i) => {
              expect(got[i]).toBe((a * b) % n); // reference: BigInt
              expect(got[i]).toBe(jsbnProduct(a, b, n)); // reference: jsbn
            });
          },
        ),
        { numRuns: bits === 2048 ? 25 : 15, seed: 20261203 },
      );
    });

    it('switches at four ones limbs: 51 low ones take the general multiply, 52 multiplyOnes, both right', () => {
      for (const ones of [51, 52]) {
        const n = withLowOnes(0x5deece66dn << BigInt(bits - 40), bits, ones);
        const k = createMontgomeryKernel(module, n);
        expect(k.onesLimbs).toBe(ones === 51 ? 0 : 4);
        const pairs: [bigint, bigint][] = [[n - 1n, n - 1n], [n - 2n, 3n], [n >> 1n, n - 12345n]];
        products(k, pairs).forEach((got, i) => expect(got).toBe(jsbnProduct(pairs[i]![0], pairs[i]![1], n))); // reference: jsbn
      }
    });

    it('sums without lane overflow when operand and modulus limbs are near their maximum', () => {
      // n = 2^bits - 1 - 2^K with K = bits/2 - 16, as keys have: h's limbs are at their maximum but
      // the lowest. Operands are stored as m for x = m / R mod n, so with m just below n each
      // operand limb is maximal too.
      const lowOnes = bits / 2 - 16;
      const n = (1n << BigInt(bits)) - 1n - (1n << BigInt(lowOnes));
      const rInv = back(big(1n << BigInt(LIMB_BITS * limbs)).modInverse(big(n))); // reference: jsbn
      const xs = [n - 1n, n - 0x7f4a7c159e3779b9n, n - 4097n, n - (1n << 200n) + 12345n].map((m) => (m * rInv) % n);
      const pairs = xs.flatMap((a) => xs.map((b) => [a, b] as [bigint, bigint]));
      const k = createMontgomeryKernel(module, n);
      expect(k.onesLimbs).toBe(Math.floor(lowOnes / LIMB_BITS));
      products(k, pairs).forEach((got, i) => expect(got).toBe((pairs[i]![0] * pairs[i]![1]) % n)); // reference: BigInt
    });

    it('keeps a chain of 300 in-place products in Montgomery form, four lanes apart', async () => {
      const { n } = await generateKeyPair({ modulusBits: bits });
      const k = createMontgomeryKernel(module, n);
      expect(k.onesLimbs).toBeGreaterThanOrEqual(Math.floor((bits / 2 - 16) / LIMB_BITS)); // more when bit K happens to be one
      const factors = [3n, n - 7n, (n >> 3n) + 11n, 1n << BigInt(bits - 9), n - 1n];
      k.ensureSlots(10);
      factors.forEach((f, i) => {
        k.set(i, 1n);
        k.set(5 + i, f);
      });
      const lanes = Uint32Array.from({ length: 5 }, (_, i) => i);
      const by = Uint32Array.from({ length: 5 }, (_, i) => 5 + i);
      for (let step = 0; step < 300; step++) k.multiplyMany(lanes, lanes, by, 5);
      factors.forEach((f, i) => expect(k.get(i)).toBe(back(big(f).modPow(big(300n), big(n))))); // reference: jsbn modPow
    });
  });
}
