import { BigInteger } from 'jsbn';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';

const big = (x: bigint) => new BigInteger(x.toString(16), 16);

/**
 * The Legendre symbol of a modulo an odd prime p by Euler's criterion, computed by jsbn (npm
 * jsbn 1.1.0), an outside reference: a^((p-1)/2) is 1 for a residue, p - 1 for a non-residue and
 * 0 for a multiple of p (common practice). The Jacobi symbol modulo n = pq is the product of two.
 */
export function eulerSymbol(a: bigint, p: bigint): 1 | -1 | 0 {
  const v = BigInt('0x' + big(a % p).modPow(big((p - 1n) / 2n), big(p)).toString(16));
  return v === 1n ? 1 : v === 0n ? 0 : -1;
}

/** A seeded stand-in for a random source that fills bytes: deterministic subsets in tests. */
export function seededBytes(seed: number): (bytes: Uint8Array) => void {
  const next = seededRandom(seed);
  return (bytes) => {
    for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor(next() * 256);
  };
}
