// Montgomery arithmetic on plain bigint: the slow, obviously correct reference for the kernel, and
// a fallback where WebAssembly is unavailable. Variable-time throughout (BigInt is).
import { modInverse } from '../bigint/modular.ts';

export interface BigintMontgomery {
  readonly modulus: bigint;
  /** R = 2^rBits, with R > n. */
  readonly rBits: number;
  /** x * R mod n, for any bigint x. */
  toMontgomery(x: bigint): bigint;
  /** x / R mod n in [0, n), for x in [0, n * R). */
  fromMontgomery(x: bigint): bigint;
  /** a * b / R mod n in [0, n), for a, b in [0, n) (REDC of the product, one final subtraction). */
  multiply(a: bigint, b: bigint): bigint;
}

/**
 * Montgomery reference for an odd modulus n >= 3 and R = 2^rBits > n (default: the bit length of
 * n rounded up to a multiple of 64). Throws TypeError for a non-bigint n or non-integer rBits and
 * RangeError for an even or small n or an R not above n.
 */
export function bigintMontgomery(n: bigint, rBits?: number): BigintMontgomery {
  if (typeof n !== 'bigint') throw new TypeError(`bigintMontgomery: expected bigint modulus, got ${typeof n}`);
  if (n < 3n || (n & 1n) === 0n) throw new RangeError(`bigintMontgomery: expected odd modulus >= 3, got ${n}`);
  const bits = n.toString(2).length;
  const rb = rBits ?? Math.ceil(bits / 64) * 64;
  if (!Number.isSafeInteger(rb)) throw new TypeError(`bigintMontgomery: expected integer rBits, got ${rBits}`);
  if (rb < bits) throw new RangeError(`bigintMontgomery: expected R = 2^rBits > n, got rBits ${rb} for a ${bits}-bit n`);
  const r = 1n << BigInt(rb);
  const mask = r - 1n;
  const shift = BigInt(rb);
  const negInv = r - modInverse(n, r); // -n^-1 mod R
  const redc = (t: bigint): bigint => {
    const m = ((t & mask) * negInv) & mask;
    const u = (t + m * n) >> shift;
    return u >= n ? u - n : u;
  };
  return {
    modulus: n,
    rBits: rb,
    toMontgomery: (x) => (((x % n) + n) % n << shift) % n,
    fromMontgomery: (x) => redc(x),
    multiply: (a, b) => redc(a * b),
  };
}
