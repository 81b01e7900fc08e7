import { checkPrimeSync, generatePrimeSync } from 'node:crypto';
import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { sqrtModPrime, squareRootsModulo } from '../../../core/bigint/sqrt-mod-prime.ts';

// Outside references: jsbn squares every root again; node:crypto makes and checks the primes;
// small primes are checked against the full list of squares, by enumeration.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);
const squareModJsbn = (r: bigint, p: bigint) => BigInt('0x' + big(r).modPow(new BigInteger('2'), big(p)).toString(16));

describe('sqrtModPrime', () => {
  it('solves the worked example r^2 = 5 mod 41 (Wikipedia, "Tonelli-Shanks algorithm", Example: roots 13 and 28; from memory)', () => {
    expect([13n, 28n]).toContain(sqrtModPrime(5n, 41n));
  });

  it('finds a root of every square and refuses every non-square modulo each odd prime below 300 (enumeration)', () => {
    for (let p = 3; p < 300; p += 2) {
      if (!checkPrimeSync(BigInt(p))) continue;
      const squares = new Set(Array.from({ length: p }, (_, r) => (r * r) % p));
      const root = squareRootsModulo(BigInt(p));
      for (let a = 0; a < p; a++) {
        if (squares.has(a)) {
          const r = Number(root(BigInt(a)));
          expect((r * r) % p, `root of ${a} mod ${p}`).toBe(a);
        } else {
          expect(() => root(BigInt(a)), `${a} mod ${p} is no square`).toThrow(RangeError);
        }
      }
    }
  });

  it('finds roots modulo 1024-bit primes with p - 1 divisible by 2, 2^8 and 2^40 (node:crypto primes, jsbn squares them)', () => {
    for (const twos of [1n, 8n, 40n]) {
      // generatePrime's add/rem give p = 1 + 2^twos mod 2^(twos + 1): exactly twos factors of two in p - 1.
      const p = generatePrimeSync(1024, { bigint: true, add: 1n << (twos + 1n), rem: (1n << twos) + 1n });
      expect(checkPrimeSync(p)).toBe(true);
      const root = squareRootsModulo(p);
      fc.assert(
        fc.property(fc.bigInt({ min: 1n, max: p - 1n }), (r0) => {
          const a = (r0 * r0) % p;
          const r = root(a);
          return squareModJsbn(r, p) === a && (r === r0 || r === p - r0);
        }),
        { numRuns: 40, seed: 20261203 },
      );
    }
  });

  it('refuses a non-residue modulo a large prime, and even or tiny moduli', () => {
    const p = generatePrimeSync(512, { bigint: true, add: 1n << 17n, rem: (1n << 16n) + 1n });
    // The least non-residue z: z is a square only if its Legendre symbol is +1; pick one that is not.
    let z = 2n;
    while (BigInt('0x' + big(z).modPow(big((p - 1n) / 2n), big(p)).toString(16)) !== p - 1n) z++;
    expect(() => sqrtModPrime(z, p)).toThrow(/expected a square modulo p/);
    expect(() => sqrtModPrime(4n, 10n)).toThrow(RangeError);
    expect(() => sqrtModPrime(1n, 1n)).toThrow(RangeError);
    expect(() => sqrtModPrime(1 as unknown as bigint, 7n)).toThrow(TypeError);
    expect(sqrtModPrime(0n, 7n)).toBe(0n);
  });
});
