// Shared by the kernel tests: the outside references (native BigInt and jsbn, an independent
// big-integer library) and a helper that runs a batch of products through the kernel.
import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import type { MontgomeryKernel } from '../../../core/montgomery/kernel.ts';

export const big = (x: bigint) => new BigInteger(x.toString(16), 16);
export const back = (x: BigInteger) => BigInt('0x' + x.toString(16));
/** (a * b) mod n by jsbn: multiply, then mod. */
export const jsbnProduct = (a: bigint, b: bigint, n: bigint) => back(big(a).multiply(big(b)).mod(big(n)));

/** Operands below n, with the edges 0, 1, n-1, n-2 drawn often. */
export const operand = (n: bigint) =>
  fc.oneof(fc.constantFrom(0n, 1n, n - 1n, n - 2n), fc.bigInt({ min: 0n, max: n - 1n }), fc.bigInt({ min: n - (1n << 64n), max: n - 1n }));

/** Runs multiplyMany on the pairs (slots 0..c-1 left, c..2c-1 right, 2c..3c-1 out), returns get(out). */
export function products(k: MontgomeryKernel, pairs: [bigint, bigint][]): bigint[] {
  const c = pairs.length;
  k.ensureSlots(3 * c);
  pairs.forEach(([a, b], i) => {
    k.set(i, a);
    k.set(c + i, b);
  });
  const idx = (base: number) => Uint32Array.from({ length: c }, (_, i) => base + i);
  k.multiplyMany(idx(2 * c), idx(0), idx(c), c);
  return pairs.map((_, i) => k.get(2 * c + i));
}
