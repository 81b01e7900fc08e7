import { checkPrimeSync } from 'node:crypto';
import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { jacobi, legendre } from '../../../core/bigint/jacobi.ts';
import { randomPrime } from '../../../core/bigint/primes.ts';
import { randomBelow } from '../../../core/bigint/random.ts';
import hac from '../../vectors/hac-table-2.3-jacobi-mod-21.json' with { type: 'json' };
import wiki from '../../vectors/wikipedia-jacobi-symbol-table-n-1-to-17.json' with { type: 'json' };

const big = (x: bigint) => new BigInteger(x.toString(16), 16);

/** Euler's criterion with small numbers by repeated multiplication: slow and obviously right. */
function eulerSmall(a: number, p: number): -1 | 0 | 1 {
  let r = 1;
  for (let i = 0; i < (p - 1) / 2; i++) r = (r * (a % p)) % p;
  return r === 0 ? 0 : r === 1 ? 1 : r === p - 1 ? -1 : (() => { throw new Error(`not a prime: ${p}`); })();
}

/** Euler's criterion a^((p-1)/2) mod p computed by jsbn (the outside reference). */
function eulerJsbn(a: bigint, p: bigint): -1 | 0 | 1 {
  const r = big(a % p).modPow(big((p - 1n) / 2n), big(p)).toString(16);
  const v = BigInt('0x' + r);
  if (v === 0n) return 0;
  if (v === 1n) return 1;
  if (v === p - 1n) return -1;
  throw new Error('Euler criterion gave neither 0, 1 nor -1');
}

describe('jacobi: published tables', () => {
  it('matches HAC Table 2.3, (a/21) for a = 0..20 (values from memory, each re-derived)', () => {
    const entries = Object.entries(hac.jacobi);
    expect(entries).toHaveLength(21);
    for (const [a, expected] of entries) {
      const x = Number(a);
      // (a/21) = (a/3)(a/7) by definition of the Jacobi symbol; each factor by Euler's criterion.
      const product = eulerSmall(x, 3) * eulerSmall(x, 7) || 0; // || 0 turns -0 into 0
      expect(product, `re-derived (${a}/21)`).toBe(expected);
      expect(jacobi(BigInt(x), 21n), `(${a}/21)`).toBe(expected);
    }
  });

  it('matches the Wikipedia table of (k/n) for odd n up to 17 (read, not recalled)', () => {
    for (const [n, row] of Object.entries(wiki.rows)) {
      expect(row).toHaveLength(Number(n));
      row.forEach((expected, k) => expect(jacobi(BigInt(k), BigInt(n)), `(${k}/${n})`).toBe(expected));
    }
  });
});

describe('legendre: against Euler criterion computed by jsbn', () => {
  it.each([16, 64, 256, 1024])('agrees on random a for random %i-bit primes', (bits) => {
    for (let t = 0; t < 3; t++) {
      const p = randomPrime(bits);
      expect(checkPrimeSync(p), 'node:crypto checkPrime').toBe(true);
      for (let i = 0; i < 40; i++) {
        const a = randomBelow(p);
        expect(legendre(a, p)).toBe(eulerJsbn(a, p));
      }
      expect(legendre(0n, p)).toBe(0);
      expect(legendre(p * 3n, p)).toBe(0);
    }
  });

  it('sees both residues and non-residues (a check that can fail if the sign logic is stuck)', () => {
    const p = randomPrime(128);
    const seen = new Set<number>();
    for (let a = 1n; a < 40n; a++) seen.add(legendre(a, p));
    expect([...seen].sort()).toEqual([-1, 1]);
  });
});

const oddModulus = fc.bigInt({ min: 0n, max: (1n << 200n) - 1n }).map((x) => 2n * x + 1n);
const anyInt = fc.bigInt({ min: -(1n << 220n), max: 1n << 220n });

describe('jacobi: algebraic laws (fast-check)', () => {
  it('is multiplicative in a: (ab/n) = (a/n)(b/n)', () => {
    fc.assert(fc.property(anyInt, anyInt, oddModulus, (a, b, n) => jacobi(a * b, n) === jacobi(a, n) * jacobi(b, n)), { seed: 20261203 });
  });

  it('is multiplicative in n: (a/mn) = (a/m)(a/n)', () => {
    fc.assert(fc.property(anyInt, oddModulus, oddModulus, (a, m, n) => jacobi(a, m * n) === jacobi(a, m) * jacobi(a, n)), { seed: 20261203 });
  });

  it('depends only on a mod n: (a+n/n) = (a/n), also for negative a', () => {
    fc.assert(fc.property(anyInt, oddModulus, fc.integer({ min: -3, max: 3 }), (a, n, k) => jacobi(a + BigInt(k) * n, n) === jacobi(a, n)), { seed: 20261203 });
  });

  it('is 0 exactly when gcd(a, n) > 1 (checked with jsbn gcd)', () => {
    fc.assert(
      fc.property(fc.bigInt({ min: 0n, max: 1n << 64n }), oddModulus, (a, n) => {
        const shared = big(a).gcd(big(n)).toString(16) !== '1';
        return (jacobi(a, n) === 0) === shared;
      }),
      { seed: 20261203 },
    );
  });
});

describe('jacobi: edge cases and arguments', () => {
  it('handles a = 0, 1, n-1, a > n and n = 1', () => {
    expect(jacobi(0n, 1n)).toBe(1); // (a/1) = 1 for every a: common practice, empty product
    expect(jacobi(12345n, 1n)).toBe(1);
    expect(jacobi(0n, 7n)).toBe(0);
    expect(jacobi(1n, 7n)).toBe(1);
    // (-1/n) = +1 when n = 1 mod 4, -1 when n = 3 mod 4 (first supplement: common practice).
    expect(jacobi(6n, 7n)).toBe(-1);
    expect(jacobi(12n, 13n)).toBe(1);
    expect(jacobi(2n + 21n * 5n, 21n)).toBe(jacobi(2n, 21n));
    expect(jacobi(-1n, 7n)).toBe(-1);
  });

  it('rejects even or non-positive n and non-bigints', () => {
    expect(() => jacobi(3n, 8n)).toThrow(RangeError);
    expect(() => jacobi(3n, 0n)).toThrow(/expected odd n >= 1, got 0/);
    expect(() => jacobi(3n, -7n)).toThrow(RangeError);
    expect(() => jacobi(3 as unknown as bigint, 7n)).toThrow(TypeError);
  });
});
