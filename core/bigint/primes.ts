import { bitLength } from './bit-length.ts';
import { modPow } from './modular.ts';
import { randomBelow, randomBits } from './random.ts';

/** Odd primes below 2000, by a sieve at load time; used for trial division before Miller-Rabin. */
export const SMALL_PRIMES: readonly bigint[] = sieve(2000);

function sieve(limit: number): bigint[] {
  const composite = new Uint8Array(limit);
  const out: bigint[] = [];
  for (let i = 3; i < limit; i += 2) {
    if (composite[i]) continue;
    out.push(BigInt(i));
    for (let j = i * i; j < limit; j += 2 * i) composite[j] = 1;
  }
  return out;
}

/**
 * Miller-Rabin rounds used when the caller gives none: 64, whatever the size. We do not use the
 * smaller minimum counts of FIPS 186-5 Appendix B.3 (those assume random candidates); 64 rounds
 * with random bases bound the error by 4^-64 = 2^-128 for any odd input, adversarial or not
 * (common practice: the error per round is at most 1/4).
 */
export const DEFAULT_MILLER_RABIN_ROUNDS = 64;

/**
 * Probable-prime test: trial division by the odd primes below 2000, then `rounds` Miller-Rabin
 * rounds with uniform random bases in [2, n-2]. A prime is always accepted; a composite passes
 * with probability at most 4^-rounds. Variable-time (n is public or a candidate being generated).
 * Throws TypeError for a non-bigint n, RangeError for rounds not an integer >= 1.
 */
export function isProbablePrime(n: bigint, rounds: number = DEFAULT_MILLER_RABIN_ROUNDS): boolean {
  if (typeof n !== 'bigint') throw new TypeError(`isProbablePrime: expected bigint, got ${typeof n}`);
  if (!Number.isSafeInteger(rounds) || rounds < 1) {
    throw new RangeError(`isProbablePrime: expected integer rounds >= 1, got ${rounds}`);
  }
  if (n < 2n) return false;
  if (n === 2n) return true;
  if ((n & 1n) === 0n) return false;
  for (const p of SMALL_PRIMES) {
    if (n === p) return true;
    if (n % p === 0n) return false;
  }
  let d = n - 1n;
  let s = 0;
  while ((d & 1n) === 0n) {
    d >>= 1n;
    s++;
  }
  for (let i = 0; i < rounds; i++) {
    const a = 2n + randomBelow(n - 3n); // uniform in [2, n-2]
    if (!millerRabinRound(n, d, s, a)) return false;
  }
  return true;
}

/** One Miller-Rabin round for odd n with n - 1 = d * 2^s, d odd: false means n is composite. */
function millerRabinRound(n: bigint, d: bigint, s: number, a: bigint): boolean {
  let x = modPow(a, d, n);
  if (x === 1n || x === n - 1n) return true;
  for (let r = 1; r < s; r++) {
    x = (x * x) % n;
    if (x === n - 1n) return true;
    if (x === 1n) return false;
  }
  return false;
}

/**
 * A random probable prime of exactly `bits` bits with its top two bits set, so the product of
 * two such primes has exactly 2*bits bits. Each candidate is a fresh random odd number (no
 * incremental search), tested with isProbablePrime at the default 64 rounds. Variable-time.
 * Throws RangeError when bits is not an integer >= 2.
 */
export function randomPrime(bits: number): bigint {
  if (!Number.isSafeInteger(bits) || bits < 2) throw new RangeError(`randomPrime: expected integer bits >= 2, got ${bits}`);
  const top = 3n << BigInt(bits - 2);
  for (;;) {
    const candidate = randomBits(bits) | top | 1n;
    if (isProbablePrime(candidate)) {
      if (bitLength(candidate) !== bits) throw new RangeError('randomPrime: internal check failed, wrong bit length');
      return candidate;
    }
  }
}
