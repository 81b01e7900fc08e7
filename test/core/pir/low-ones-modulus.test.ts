import { checkPrimeSync } from 'node:crypto';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { randomPrime } from '../../../core/bigint/primes.ts';
import { hasLowOnes, lowOnesBits, partnerPrime } from '../../../core/pir/low-ones-modulus.ts';

// Outside references: node:crypto checkPrimeSync for primality, jsbn for bit lengths and the low bits of n.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);

describe('partnerPrime', () => {
  it('gives a prime q of p\'s length with p q of the full length and its low bits all ones', () => {
    for (const bits of [2048, 3072]) {
      const p = randomPrime(bits / 2);
      let q: bigint | null = null;
      while (q === null) q = partnerPrime(p, bits);
      expect(checkPrimeSync(q), 'node:crypto checkPrime q').toBe(true);
      const n = big(p).multiply(big(q));
      expect(n.bitLength()).toBe(bits); // jsbn
      expect(big(q).bitLength()).toBe(bits / 2); // jsbn
      expect(n.add(BigInteger.ONE).getLowestSetBit()).toBeGreaterThanOrEqual(lowOnesBits(bits)); // jsbn: n = -1 mod 2^K
      expect(hasLowOnes(p * q, lowOnesBits(bits))).toBe(true);
    }
  });

  it('draws q afresh each time (about 50 primes fit each p)', () => {
    const p = randomPrime(1024);
    const seen = new Set<bigint>();
    for (let i = 0; i < 4; i++) {
      const q = partnerPrime(p, 2048);
      if (q !== null) seen.add(q);
    }
    expect(seen.size).toBeGreaterThan(1);
  });

  it('refuses an even p or one of the wrong length', () => {
    expect(() => partnerPrime(1n << 1023n, 2048)).toThrow(/partnerPrime: expected an odd p of 1024 bits, got 1024 bits/);
    expect(() => partnerPrime((1n << 1000n) + 1n, 2048)).toThrow(RangeError);
  });
});

describe('hasLowOnes and lowOnesBits', () => {
  it('reads the low bits', () => {
    expect(lowOnesBits(2048)).toBe(1008);
    expect(lowOnesBits(3072)).toBe(1520);
    expect(hasLowOnes(0b1011n, 2)).toBe(true);
    expect(hasLowOnes(0b1011n, 3)).toBe(false);
    expect(hasLowOnes((1n << 2048n) - 1n, 2047)).toBe(true);
  });
});
