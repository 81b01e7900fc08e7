import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { eulerSymbol } from './residuosity-reference.ts';

// Outside reference: jsbn (npm jsbn 1.1.0), its isProbablePrime (trial division, then Miller-Rabin)
// and bit arithmetic; Euler's criterion by jsbn in residuosity-reference.ts.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);
/** jsbn's Miller-Rabin rounds: its error bound is 4^-t per composite (common practice). */
const JSBN_ROUNDS = 40;
const jsbnPrime = (x: bigint) => big(x).isProbablePrime(JSBN_ROUNDS);

function checkKey(key: PirKeyPair): void {
  expect(key.modulusBits).toBe(3072);
  expect(big(key.n).bitLength(), 'n, jsbn').toBe(3072);
  expect(big(key.p).multiply(big(key.q)).equals(big(key.n)), 'n = p q, jsbn').toBe(true);
  expect([big(key.p).bitLength(), big(key.q).bitLength()], 'p and q, jsbn').toEqual([1536, 1536]);
  expect(key.p).not.toBe(key.q);
  expect(jsbnPrime(key.p), 'p prime, jsbn').toBe(true);
  expect(jsbnPrime(key.q), 'q prime, jsbn').toBe(true);
  // The reference can say no: n itself is composite.
  expect(jsbnPrime(key.n), 'n composite, jsbn').toBe(false);
  expect([eulerSymbol(key.w, key.p), eulerSymbol(key.w, key.q)], 'w a non-residue mod p and q').toEqual([-1, -1]);
}

// On a shared 2-core machine the slowest test measured 3.5 to 9.4 s (the prime search varies); the limit is about twice that.
describe('3072-bit keys from the own prime generator (randomPrime), checked by jsbn', { timeout: 20_000 }, () => {
  it('two fresh primes (lowOnes false): both of 1536 bits with the top two bits set', async () => {
    const key = await generateKeyPair({ modulusBits: 3072, method: 'own', lowOnes: false });
    checkKey(key);
    // randomPrime sets the top two bits so that n has exactly 3072 bits (jsbn shiftRight).
    expect([big(key.p).shiftRight(1534).intValue(), big(key.q).shiftRight(1534).intValue()]).toEqual([3, 3]);
  });

  it('p from randomPrime and its partner (the default): the low 1,520 bits of n all ones', async () => {
    const key = await generateKeyPair({ modulusBits: 3072, method: 'own' });
    checkKey(key);
    // Trailing ones of n: the lowest set bit of n + 1 (jsbn).
    expect(big(key.n).add(BigInteger.ONE).getLowestSetBit()).toBeGreaterThanOrEqual(1520);
  });
});
