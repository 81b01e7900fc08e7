import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { gcd, mod, modInverse, modPow } from '../../../core/bigint/modular.ts';

// jsbn (an independent big-integer library) is the outside reference for every value below.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);
const back = (x: BigInteger) => BigInt('0x' + x.toString(16));

const nonNeg = fc.bigInt({ min: 0n, max: 1n << 600n });
const modulus = fc.bigInt({ min: 2n, max: 1n << 600n });

describe('modPow', () => {
  it('matches jsbn modPow (fast-check)', () => {
    // Exponents up to 1100 bits: every window width (1, 4 and 5 bits) is taken.
    fc.assert(fc.property(nonNeg, fc.bigInt({ min: 0n, max: 1n << 1100n }), modulus, (b, e, n) => modPow(b, e, n) === back(big(b).modPow(big(e), big(n)))), {
      numRuns: 300,
      seed: 20261203,
    });
  });

  it('reduces negative bases and handles exponent 0 and modulus 1', () => {
    expect(modPow(-2n, 3n, 7n)).toBe(mod(-8n, 7n));
    expect(mod(-8n, 7n)).toBe(6n);
    expect(modPow(5n, 0n, 7n)).toBe(1n);
    expect(modPow(5n, 3n, 1n)).toBe(0n);
  });

  it('checks its arguments', () => {
    expect(() => modPow(2n, -1n, 7n)).toThrow(/expected exponent >= 0, got -1/);
    expect(() => modPow(2n, 1n, 0n)).toThrow(RangeError);
    expect(() => modPow(2 as unknown as bigint, 1n, 7n)).toThrow(TypeError);
  });
});

describe('gcd and modInverse', () => {
  it('gcd matches jsbn gcd (fast-check)', () => {
    fc.assert(fc.property(nonNeg, nonNeg, (a, b) => gcd(a, b) === back(big(a).gcd(big(b)))), { seed: 20261203 });
    expect(gcd(-12n, 18n)).toBe(6n);
    expect(gcd(0n, 0n)).toBe(0n);
  });

  it('modInverse matches jsbn modInverse when gcd is 1, and throws otherwise (fast-check)', () => {
    fc.assert(
      fc.property(nonNeg, modulus, (a, n) => {
        if (gcd(a, n) === 1n) return modInverse(a, n) === back(big(a).modInverse(big(n)));
        expect(() => modInverse(a, n)).toThrow(RangeError);
        return true;
      }),
      { seed: 20261203 },
    );
  });

  it('inverts negative values and refuses shared factors', () => {
    expect(mod(modInverse(-3n, 7n) * -3n, 7n)).toBe(1n);
    expect(() => modInverse(6n, 9n)).toThrow(/expected a coprime to the modulus, got gcd 3/);
    expect(() => modInverse(1n, 1n)).toThrow(/expected modulus >= 2/);
  });
});
