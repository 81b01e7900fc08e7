import { bitLength } from './bit-length.ts';
import { gcd } from './modular.ts';

// Randomness comes only from globalThis.crypto.getRandomValues (Node 20, Workers, browsers).
const MAX_CHUNK = 65536; // getRandomValues refuses more bytes per call (Web Crypto spec)

function randomBytes(length: number): Uint8Array {
  const out = new Uint8Array(length);
  for (let i = 0; i < length; i += MAX_CHUNK) {
    globalThis.crypto.getRandomValues(out.subarray(i, Math.min(length, i + MAX_CHUNK)));
  }
  return out;
}

/**
 * Uniform integer in [0, 2^bits). bits must be an integer >= 1 (RangeError otherwise).
 * Not constant-time in bits (public).
 */
export function randomBits(bits: number): bigint {
  if (!Number.isSafeInteger(bits) || bits < 1) throw new RangeError(`randomBits: expected integer bits >= 1, got ${bits}`);
  const bytes = randomBytes(Math.ceil(bits / 8));
  const extra = bytes.length * 8 - bits;
  bytes[0] = bytes[0]! & (0xff >>> extra);
  let hex = '0x';
  for (const b of bytes) hex += b.toString(16).padStart(2, '0');
  return BigInt(hex);
}

/**
 * Uniform integer in [0, n) for n >= 1, by rejection sampling on bitLength(n) bits (fewer than
 * two draws expected). Variable-time: the number of draws leaks, the value does not.
 */
export function randomBelow(n: bigint): bigint {
  if (typeof n !== 'bigint') throw new TypeError(`randomBelow: expected bigint, got ${typeof n}`);
  if (n < 1n) throw new RangeError(`randomBelow: expected n >= 1, got ${n}`);
  if (n === 1n) return 0n;
  const bits = bitLength(n - 1n);
  for (;;) {
    const x = randomBits(bits);
    if (x < n) return x;
  }
}

/**
 * Uniform integer in [1, n) with gcd(x, n) = 1, for n >= 2 (RangeError otherwise).
 * Rejection sampling; variable-time.
 */
export function randomUnit(n: bigint): bigint {
  if (typeof n !== 'bigint') throw new TypeError(`randomUnit: expected bigint, got ${typeof n}`);
  if (n < 2n) throw new RangeError(`randomUnit: expected n >= 2, got ${n}`);
  for (;;) {
    const x = randomBelow(n);
    if (x !== 0n && gcd(x, n) === 1n) return x;
  }
}
