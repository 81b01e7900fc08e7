// Moduli whose low half is all ones. The server's kernel reduces modulo such an n with about half
// the limb products (scripts/montgomery/generate-kernel.ts, multiplyOnes), so every answer costs
// less CPU. Fixing part of an RSA modulus's bits in advance is a published technique (A. K.
// Lenstra, "Generating RSA moduli with a predetermined portion", ASIACRYPT 1998; M. Joye, "RSA
// moduli with a predetermined portion: techniques and applications", ISPEC 2008; from memory):
// up to about half of the bits may be chosen, and no attack is known that uses them.
import { bitLength } from '../bigint/bit-length.ts';
import { modInverse } from '../bigint/modular.ts';
import { isProbablePrime } from '../bigint/primes.ts';
import { randomBelow } from '../bigint/random.ts';

/**
 * Low bits of n set to one: half the modulus less 16 bits, so the partner prime keeps 16 free
 * bits above them (about 2^16 / 3 candidates, some 50 primes, for every p).
 */
export function lowOnesBits(modulusBits: number): number {
  return modulusBits / 2 - 16;
}

/** True when the low `bits` bits of n are all ones (n = -1 mod 2^bits). */
export function hasLowOnes(n: bigint, bits: number): boolean {
  const mask = (1n << BigInt(bits)) - 1n;
  return (n & mask) === mask;
}

/** Candidates drawn for one p before giving up on it (expected: about 350). */
const DRAWS_PER_PRIME = 20_000;

/**
 * A prime q with n = p q of exactly modulusBits bits, q of the same length as p, and the low
 * lowOnesBits(modulusBits) bits of n all ones: q = -p^-1 mod 2^K, so q = c + t 2^K, and t is drawn
 * uniformly among the values that keep q in range until q is a probable prime. Returns null when
 * no prime turned up (the caller draws another p). Variable-time (client only).
 * Throws RangeError when p is even or not of length modulusBits / 2.
 */
export function partnerPrime(p: bigint, modulusBits: number): bigint | null {
  const half = modulusBits / 2;
  if ((p & 1n) === 0n || bitLength(p) !== half) {
    throw new RangeError(`partnerPrime: expected an odd p of ${half} bits, got ${bitLength(p)} bits`);
  }
  const k = BigInt(lowOnesBits(modulusBits));
  const step = 1n << k;
  const residue = (step - modInverse(p % step, step)) % step; // p q = -1 mod 2^K
  // q in [max(2^(half-1), ceil(2^(bits-1) / p)), 2^half): n has modulusBits bits, q half of them.
  const low = [1n << BigInt(half - 1), ((1n << BigInt(modulusBits - 1)) + p - 1n) / p].reduce((a, b) => (a > b ? a : b));
  const high = (1n << BigInt(half)) - 1n;
  const tMin = (low - residue + step - 1n) / step;
  const tMax = (high - residue) / step;
  if (tMax < tMin) return null;
  for (let draw = 0; draw < DRAWS_PER_PRIME; draw++) {
    const q = residue + (tMin + randomBelow(tMax - tMin + 1n)) * step;
    if (q !== p && isProbablePrime(q)) return q;
  }
  return null;
}
