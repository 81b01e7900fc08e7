// Set-up for the kernel's multiplyOnes (scripts/montgomery/generate-kernel.ts): moduli whose low
// limbs are all ones, n = h 2^(limbBits m) - 1, reduce with about half the products of a general
// modulus. Pure arithmetic on sizes and byte offsets; kernel.ts writes the results to memory.
import { bitLength } from '../bigint/bit-length.ts';

/**
 * Fewest all-ones low limbs for multiplyOnes. The reduction sums of a group of four columns read
 * digits q up to q_{k+3-m}; with m >= 4 these all belong to earlier groups.
 */
export const MIN_ONES_LIMBS = 4;

/** Pair steps per unrolled block in the kernel (its PAIR_STEPS); the schedule rounds ranges up to it. */
export const BLOCK_STEPS = 2;
/** Words of one schedule entry (the kernel's SCHEDULE_ENTRY bytes / 4): k, two (x, y, blocks) triples, one unused. */
export const SCHEDULE_ENTRY_WORDS = 8;
const V = 16;

/**
 * How many low limbs of the odd modulus n are all ones, that is the largest m with
 * n = -1 mod 2^(limbBits m), at most limbs - 1 (h = (n + 1) / 2^(limbBits m) keeps one limb).
 */
export function onesLimbs(n: bigint, limbBits: number, limbs: number): number {
  const next = n + 1n;
  const trailingOnes = bitLength(next & -next) - 1; // n + 1 = 2^t * odd
  return Math.min(Math.floor(trailingOnes / limbBits), limbs - 1);
}

/** Byte offsets of the pair areas, as the module exports them. */
export interface PairAreas {
  pairLeft: number;
  pairRight: number;
  pairDigits: number;
  pairModulus: number;
}

/**
 * One entry per group of four columns, low groups k = 0, 4, .. below `limbs` and then high groups
 * k = limbs, limbs + 4, .. below 2 limbs: k, the product sum's (x address, y address, blocks) and
 * the reduction sum's. Column k + c takes dot(X[u], Y[k + c - shift - 2u]) over the u where both
 * pair vectors can be non-zero (X: u < ceil(limbs / 2); Y: index 0 .. yTop), rounded up to whole
 * blocks; the arrays' zero padding covers the rounding. An empty range has zero blocks.
 */
export function onesSchedule(limbs: number, ones: number, highLimbs: number, areas: PairAreas): Int32Array {
  const entries: number[] = [];
  const pairs = Math.ceil(limbs / 2);
  const range = (k: number, shift: number, yTop: number, x: number, y: number): number[] => {
    const u0 = Math.max(0, Math.ceil((k - shift - yTop) / 2));
    const u1 = Math.min(pairs - 1, Math.floor((k + 3 - shift) / 2));
    if (u1 < u0) return [x, y, 0];
    const blocks = Math.ceil((u1 - u0 + 1) / BLOCK_STEPS);
    return [x + u0 * V, y + (k - shift - 2 * u0 - 2 * (BLOCK_STEPS - 1)) * V, blocks];
  };
  const add = (k: number) =>
    entries.push(
      k,
      ...range(k, 0, limbs, areas.pairLeft, areas.pairRight),
      ...range(k, ones, highLimbs, areas.pairDigits, areas.pairModulus),
      0,
    );
  for (let k = 0; k < limbs; k += 4) add(k);
  for (let k = limbs; k < 2 * limbs; k += 4) add(k);
  return Int32Array.from(entries);
}
