import { checkPrimeSync } from 'node:crypto';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { bitLength } from '../../../core/bigint/bit-length.ts';
import { isProbablePrime, randomPrime, SMALL_PRIMES } from '../../../core/bigint/primes.ts';

// node:crypto checkPrimeSync (OpenSSL's primality test) is the outside reference throughout.

describe('isProbablePrime', () => {
  it('rejects the Carmichael numbers 561, 41041, 825265 (common practice: Fermat liars for every coprime base)', () => {
    for (const n of [561n, 41041n, 825265n]) {
      expect(checkPrimeSync(n), `node:crypto on ${n}`).toBe(false);
      expect(isProbablePrime(n)).toBe(false);
    }
  });

  it('rejects a Carmichael number with no factor below 2000, so Miller-Rabin itself must catch it', () => {
    // (6k+1)(12k+1)(18k+1) with k = 370, all three prime: Chernick's construction (common practice).
    const factors = [2221n, 4441n, 6661n];
    const n = factors.reduce((x, y) => x * y);
    for (const f of factors) {
      expect(checkPrimeSync(f), `node:crypto on ${f}`).toBe(true);
      expect((n - 1n) % (f - 1n), `Korselt: ${f} - 1 divides n - 1`).toBe(0n); // so n is Carmichael
    }
    expect(isProbablePrime(n)).toBe(false);
    // One round catches a composite with probability >= 3/4 (common practice); 40 single rounds
    // catching it fewer than 11 times has probability below 1e-9.
    let caught = 0;
    for (let i = 0; i < 40; i++) if (!isProbablePrime(n, 1)) caught++;
    expect(caught).toBeGreaterThan(10);
  });

  it('agrees with node:crypto on small numbers 0..5000', () => {
    for (let n = 0n; n <= 5000n; n++) expect(isProbablePrime(n), String(n)).toBe(checkPrimeSync(n));
  });

  it('agrees with node:crypto on random odd 64-bit and 160-bit numbers (fast-check)', () => {
    for (const bits of [64n, 160n]) {
      fc.assert(
        fc.property(fc.bigInt({ min: 1n << (bits - 1n), max: (1n << bits) - 1n }), (x) => {
          const n = x | 1n;
          return isProbablePrime(n, 16) === checkPrimeSync(n);
        }),
        { numRuns: 300, seed: 20261203 },
      );
    }
  });

  it('rejects products of two random 256-bit primes and accepts the primes', () => {
    const p = randomPrime(256);
    const q = randomPrime(256);
    expect(isProbablePrime(p * q)).toBe(false);
    expect(isProbablePrime(p)).toBe(true);
  });

  it('lists only primes in its trial-division table', () => {
    expect(SMALL_PRIMES[0]).toBe(3n);
    for (const p of SMALL_PRIMES) expect(checkPrimeSync(p)).toBe(true);
    // pi(2000) = 303 primes below 2000, minus the prime 2 (from memory; checked by the loop below)
    let count = 0;
    for (let n = 3n; n < 2000n; n += 2n) if (checkPrimeSync(n)) count++;
    expect(SMALL_PRIMES.length).toBe(count);
    expect(count).toBe(302);
  });

  it('checks its arguments', () => {
    expect(() => isProbablePrime(7 as unknown as bigint)).toThrow(TypeError);
    expect(() => isProbablePrime(7n, 0)).toThrow(/expected integer rounds >= 1, got 0/);
    expect(isProbablePrime(-7n)).toBe(false);
  });
});

describe('randomPrime', () => {
  it.each([8, 64, 256, 1024])('gives a %i-bit prime with the top two bits set', (bits) => {
    for (let i = 0; i < (bits > 256 ? 2 : 5); i++) {
      const p = randomPrime(bits);
      expect(checkPrimeSync(p), 'node:crypto checkPrime').toBe(true);
      expect(bitLength(p)).toBe(bits);
      expect(p >> BigInt(bits - 2)).toBe(3n);
    }
  });

  it('makes products of exactly twice the bits', () => {
    for (let i = 0; i < 5; i++) expect(bitLength(randomPrime(100) * randomPrime(100))).toBe(200);
  });

  it('checks its arguments', () => {
    expect(() => randomPrime(1)).toThrow(/expected integer bits >= 2, got 1/);
    expect(() => randomPrime(10.5)).toThrow(RangeError);
  });
});
