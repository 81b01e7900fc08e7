import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { bigintMontgomery } from '../../../core/montgomery/montgomery-bigint.ts';

// Outside references: native BigInt `(a * b) % n` and jsbn multiply + mod.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);
const back = (x: BigInteger) => BigInt('0x' + x.toString(16));

for (const bits of [2048, 3072]) {
  describe(`bigintMontgomery, ${bits}-bit moduli`, () => {
    const modulus = fc.bigInt({ min: 1n << BigInt(bits - 1), max: (1n << BigInt(bits)) - 1n }).map((n) => n | 1n);
    it('multiply through Montgomery form equals BigInt and jsbn products (fast-check)', () => {
      fc.assert(
        fc.property(
          modulus.chain((n) => fc.tuple(fc.constant(n), fc.bigInt({ min: 0n, max: n - 1n }), fc.bigInt({ min: 0n, max: n - 1n }), fc.constantFrom(undefined, 12 * Math.ceil((bits + 2) / 12)))),
          ([n, a, b, rBits]) => {
            const m = bigintMontgomery(n, rBits);
            const p = m.fromMontgomery(m.multiply(m.toMontgomery(a), m.toMontgomery(b)));
            expect(p).toBe((a * b) % n); // reference: BigInt
            expect(p).toBe(back(big(a).multiply(big(b)).mod(big(n)))); // reference: jsbn
            // Montgomery form itself: x * R mod n, checked with jsbn.
            expect(m.toMontgomery(a)).toBe(back(big(a).shiftLeft(m.rBits).mod(big(n))));
          },
        ),
        { numRuns: 30, seed: 20261203 },
      );
    });
  });
}

describe('bigintMontgomery edges and errors', () => {
  it('edge operands 0, 1, n-1 (BigInt reference)', () => {
    const n = (1n << 2048n) - 1n;
    const m = bigintMontgomery(n);
    for (const [a, b] of [[0n, n - 1n], [1n, n - 1n], [n - 1n, n - 1n]] as const) {
      expect(m.fromMontgomery(m.multiply(m.toMontgomery(a), m.toMontgomery(b)))).toBe((a * b) % n);
    }
  });

  it('checks its arguments', () => {
    expect(() => bigintMontgomery(10n)).toThrow(/bigintMontgomery: expected odd modulus >= 3, got 10/);
    expect(() => bigintMontgomery(1n)).toThrow(RangeError);
    expect(() => bigintMontgomery(7 as unknown as bigint)).toThrow(TypeError);
    expect(() => bigintMontgomery((1n << 100n) + 1n, 64)).toThrow(/expected R = 2\^rBits > n, got rBits 64 for a 101-bit n/);
    expect(() => bigintMontgomery(7n, 1.5)).toThrow(TypeError);
  });
});
