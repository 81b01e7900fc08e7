import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { createBigIntEngine } from '../../../core/pir/product-engine.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';

/** An odd modulus of exactly `bits` bits, from the property's seeded `top` bits. */
const oddModulus = (bits: number, top: bigint) => (1n << BigInt(bits - 1)) | top | 1n;
const big = (x: bigint) => new BigInteger(x.toString(16), 16);

describe('setMany (batched conversion into Montgomery form)', () => {
  it.each([2048, 3072] as const)('stores the same residues as set, at %i bits, edges included', async (bits) => {
    const module = await loadKernelModuleNode(bits);
    // Seeded (fast-check prints the seed and the counterexample on failure).
    await fc.assert(
      fc.asyncProperty(
        fc.integer({ min: 1, max: 40 }),
        fc.integer({ min: 0, max: 2 ** 31 - 1 }),
        fc.bigInt({ min: 0n, max: (1n << BigInt(bits - 2)) - 1n }),
        fc.gen(),
        async (count, seed, top, g) => {
          const n = oddModulus(bits, top);
          const kernel = createMontgomeryKernel(module, n);
          kernel.ensureSlots(4 * count + 13);
          const edges = [0n, 1n, n - 1n];
          // Values drawn away from the edges (2 .. n-3), so every product below is a real one; not
          // shrunk (shrinking many 2048-bit values one kernel at a time can run for minutes).
          const randoms = Array.from({ length: count }, () => g(() => fc.noShrink(fc.bigInt({ min: 2n, max: n - 3n }))));
          const values = [...edges, ...randoms];
          // Scattered, non-contiguous slots: every third, from a seed-dependent start, in reverse.
          const slots = values.map((_, i) => (seed % 3) + 3 * i).reverse();
          kernel.setMany(slots, values);
          slots.forEach((slot, i) => expect(kernel.get(slot)).toBe(values[i]));
          // Products of setMany'd values agree with jsbn (npm jsbn 1.1.0) multiply + mod: each random
          // value times the next one (itself when it is the only one), and n - 1 times the first.
          const pairs = [...randoms.map((_, i) => [3 + i, 3 + ((i + 1) % count)] as const), [2, 3] as const];
          const out = Uint32Array.from(pairs, (_, i) => 3 * count + 12 + i);
          kernel.multiplyMany(out, Uint32Array.from(pairs, ([a]) => slots[a]!), Uint32Array.from(pairs, ([, b]) => slots[b]!), pairs.length);
          pairs.forEach(([a, b], i) => {
            const expected = big(values[a]!).multiply(big(values[b]!)).mod(big(n));
            expect(kernel.get(out[i]!).toString(16), `values ${a} x ${b}`).toBe(expected.toString(16));
          });
        },
      ),
      { numRuns: 12, seed: 20261202 },
    );
  });

  it('refuses values outside [0, n), mismatched lengths and slots above those ensured', async () => {
    // Any odd 2048-bit modulus does; a fixed one (the digits of 0x5deece66d repeated) keeps the run reproducible.
    const n = oddModulus(2048, BigInt('0x' + '5deece66d'.repeat(227)) & ((1n << 2046n) - 1n));
    for (const engine of [createMontgomeryKernel(await loadKernelModuleNode(2048), n), createBigIntEngine(n)]) {
      engine.ensureSlots(4);
      expect(() => engine.setMany([0], [n])).toThrow(RangeError);
      expect(() => engine.setMany([0], [-1n])).toThrow(RangeError);
      expect(() => engine.setMany([0, 1], [1n])).toThrow(RangeError);
      expect(() => engine.setMany([7], [1n])).toThrow(RangeError);
    }
  });
});
