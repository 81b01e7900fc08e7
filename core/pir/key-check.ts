import { bitLength } from '../bigint/bit-length.ts';
import { legendre } from '../bigint/jacobi.ts';
import type { PirKeyPair } from './key-pair.ts';

/**
 * Checks the key-pair invariants and returns the key pair. Throws RangeError naming the first
 * broken invariant (n != p*q, p = q, wrong bit length, w not a non-residue mod p or q).
 */
export function assembleKeyPair(p: bigint, q: bigint, modulusBits: number, w: bigint): PirKeyPair {
  const n = p * q;
  if (p === q) throw new RangeError('assembleKeyPair: expected p != q, got equal primes');
  if (bitLength(n) !== modulusBits) {
    throw new RangeError(`assembleKeyPair: expected n of ${modulusBits} bits, got ${bitLength(n)}`);
  }
  if (bitLength(p) !== bitLength(q)) {
    throw new RangeError(`assembleKeyPair: expected primes of equal length, got ${bitLength(p)} and ${bitLength(q)} bits`);
  }
  if (w < 1n || w >= n || legendre(w, p) !== -1 || legendre(w, q) !== -1) {
    throw new RangeError('assembleKeyPair: expected w to be a non-residue modulo p and modulo q');
  }
  return { n, p, q, w, modulusBits };
}
