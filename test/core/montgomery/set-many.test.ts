import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { randomBelow } from '../../../core/bigint/random.ts';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { createBigIntEngine } from '../../../core/pir/product-engine.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';

const oddModulus = (bits: number) => (1n << BigInt(bits - 1)) | randomBelow(1n << BigInt(bits - 2)) | 1n;

describe('setMany (batched conversion into Montgomery form)', () => {
  it.each([2048, 3072] as const)('stores the same residues as set, at %i bits, edges included', async (bits) => {
    const module = await loadKernelModuleNode(bits);
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), async (count, seed) => {
        const n = oddModulus(bits);
        const kernel = createMontgomeryKernel(module, n);
        kernel.ensureSlots(3 * count + 12);
        const edges = [0n, 1n, n - 1n];
        const values = [...edges, ...Array.from({ length: count }, () => randomBelow(n))];
        // Scattered, non-contiguous slots: every third, from a seed-dependent start, in reverse.
        const slots = values.map((_, i) => (seed % 3) + 3 * i).reverse();
        kernel.setMany(slots, values);
        slots.forEach((slot, i) => expect(kernel.get(slot)).toBe(values[i]));
        // Products of setMany'd values agree with jsbn (npm jsbn 1.1.0) multiply + mod.
        const N = new BigInteger(n.toString(16), 16);
        const product = (kernel.multiplyMany(Uint32Array.of(slots[0]!), Uint32Array.of(slots[0]!), Uint32Array.of(slots[2]!), 1), kernel.get(slots[0]!));
        const expected = new BigInteger(values[0]!.toString(16), 16).multiply(new BigInteger(values[2]!.toString(16), 16)).mod(N);
        expect(product.toString(16)).toBe(expected.toString(16));
      }),
      { numRuns: 12, seed: 20261202 },
    );
  });

  it('refuses values outside [0, n), mismatched lengths and slots above those ensured', async () => {
    const n = oddModulus(2048);
    for (const engine of [createMontgomeryKernel(await loadKernelModuleNode(2048), n), createBigIntEngine(n)]) {
      engine.ensureSlots(4);
      expect(() => engine.setMany([0], [n])).toThrow(RangeError);
      expect(() => engine.setMany([0], [-1n])).toThrow(RangeError);
      expect(() => engine.setMany([0, 1], [1n])).toThrow(RangeError);
      expect(() => engine.setMany([7], [1n])).toThrow(RangeError);
    }
  });
});
