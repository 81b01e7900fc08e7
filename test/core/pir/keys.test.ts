import { checkPrimeSync } from 'node:crypto';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { bitLength } from '../../../core/bigint/bit-length.ts';
import { jacobi } from '../../../core/bigint/jacobi.ts';
import {
  findNonResidue,
  generateKeyPair,
  keyPairFromJson,
  keyPairToJson,
  type PirKeyPair,
} from '../../../core/pir/keys.ts';

// Outside references: node:crypto checkPrimeSync for primality, jsbn modPow for Euler's criterion.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);

/** Euler's criterion: w^((p-1)/2) mod p is p-1 exactly for a non-residue (common practice). */
function isNonResidue(w: bigint, p: bigint): boolean {
  const r = BigInt('0x' + big(w).modPow(big((p - 1n) / 2n), big(p)).toString(16));
  return r === p - 1n;
}

/** Trailing one bits of n, from jsbn: the lowest set bit of n + 1. */
const trailingOnes = (n: bigint) => big(n).add(BigInteger.ONE).getLowestSetBit();

function checkKey(key: PirKeyPair, bits: number): void {
  expect(key.modulusBits).toBe(bits);
  expect(key.n).toBe(key.p * key.q);
  expect(bitLength(key.n)).toBe(bits);
  expect(bitLength(key.p)).toBe(bits / 2);
  expect(bitLength(key.q)).toBe(bits / 2);
  expect(key.p).not.toBe(key.q);
  expect(checkPrimeSync(key.p), 'node:crypto checkPrime p').toBe(true);
  expect(checkPrimeSync(key.q), 'node:crypto checkPrime q').toBe(true);
  expect(isNonResidue(key.w, key.p), 'w non-residue mod p (jsbn Euler)').toBe(true);
  expect(isNonResidue(key.w, key.q), 'w non-residue mod q (jsbn Euler)').toBe(true);
  expect(jacobi(key.w, key.n)).toBe(1);
}

describe('generateKeyPair', () => {
  it('webcrypto, 2048 bits (the default), low 1,008 bits of n all ones', async () => {
    const key = await generateKeyPair();
    checkKey(key, 2048);
    expect(trailingOnes(key.n)).toBeGreaterThanOrEqual(1008); // jsbn
  });

  it('webcrypto, 3072 bits, low 1,520 bits of n all ones', async () => {
    const key = await generateKeyPair({ modulusBits: 3072, method: 'webcrypto' });
    checkKey(key, 3072);
    expect(trailingOnes(key.n)).toBeGreaterThanOrEqual(1520); // jsbn
  });

  it('own prime generator, 2048 bits, low 1,008 bits of n all ones', async () => {
    const key = await generateKeyPair({ modulusBits: 2048, method: 'own' });
    checkKey(key, 2048);
    expect(trailingOnes(key.n)).toBeGreaterThanOrEqual(1008); // jsbn
  });

  it('lowOnes false: p and q as the platform drew them', async () => {
    const key = await generateKeyPair({ lowOnes: false });
    checkKey(key, 2048);
    // A random odd n has t >= 1 trailing ones with probability 2^-(t-1); 64 is never reached by chance.
    expect(trailingOnes(key.n)).toBeLessThan(64); // jsbn
  });

  it('refuses other sizes and methods', async () => {
    await expect(generateKeyPair({ modulusBits: 1024 })).rejects.toThrow(/expected modulusBits in 2048, 3072, got 1024/);
    await expect(generateKeyPair({ method: 'other' as 'own' })).rejects.toThrow(RangeError);
  });
});

describe('findNonResidue', () => {
  it('finds a common non-residue for small primes, checked against Euler', () => {
    for (const [p, q] of [[7n, 11n], [1019n, 1031n], [3n, 5n]] as const) {
      for (let i = 0; i < 20; i++) {
        const w = findNonResidue(p, q);
        expect(w >= 1n && w < p * q).toBe(true);
        expect(isNonResidue(w, p) && isNonResidue(w, q)).toBe(true);
      }
    }
  });

  it('refuses equal or even primes', () => {
    expect(() => findNonResidue(7n, 7n)).toThrow(/expected distinct odd primes/);
    expect(() => findNonResidue(2n, 7n)).toThrow(RangeError);
    expect(() => findNonResidue(7 as unknown as bigint, 11n)).toThrow(TypeError);
  });
});

describe('key pair stored form', () => {
  it('round-trips through JSON text and refuses a tampered copy', async () => {
    const key = await generateKeyPair();
    const text = JSON.stringify(keyPairToJson(key));
    expect(keyPairFromJson(JSON.parse(text))).toEqual(key);

    const stored = keyPairToJson(key);
    // a square is a residue modulo both primes, so it must be refused as w
    expect(() => keyPairFromJson({ ...stored, w: ((key.w * key.w) % key.n).toString(16) })).toThrow(/non-residue/);
    expect(() => keyPairFromJson({ ...stored, n: (key.n + 2n).toString(16) })).toThrow(/expected n = p\*q/);
    expect(() => keyPairFromJson({ ...stored, modulusBits: 3072 })).toThrow(/expected n of 3072 bits, got 2048/);
    expect(() => keyPairFromJson({ ...stored, modulusBits: 1024 })).toThrow(/expected modulusBits in 2048, 3072, got 1024/);
    expect(() => keyPairFromJson({ ...stored, p: 'XYZ' })).toThrow(TypeError);
    expect(() => keyPairFromJson({ ...stored, format: 2 })).toThrow(/expected format 1, got 2/);
    expect(() => keyPairFromJson(null)).toThrow(TypeError);
  });
});
