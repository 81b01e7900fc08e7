import { jacobi } from '../bigint/jacobi.ts';
import { Batch } from './product-batch.ts';
import type { ProductEngine } from './product-engine.ts';
import type { WireNumbers } from './wire.ts';

/** Random subsets tried: a query with a bad value passes all with probability 2^-64. */
export const JACOBI_TRIALS = 64;
/** Values per table block: 2^5 subset products each, the cheapest width for 64 trials (see below). */
const BLOCK = 5;
/** Blocks whose tables are built together (their levels share a batch). */
const BLOCKS_AT_ONCE = 32;

/**
 * True when, as far as 64 random subsets can tell, every value has Jacobi symbol +1 modulo n: the
 * server's check of a query's values (validate.ts names the first bad value when this fails).
 *
 * Method: the Jacobi symbol is multiplicative, J(prod over S of y_j) = prod over S of J(y_j). For
 * each of T = 64 subsets S_t of the values, drawn from `random` (the server's CSPRNG: the client
 * never sees or chooses them), the product over S_t is made on the engine and its symbol
 * computed once. Soundness: let B be the values with J(y) = -1 and Z those sharing a factor with
 * n (J = 0). If Z meets S_t the product's symbol is 0; otherwise it is (-1)^|S_t and B|, and the
 * parity of |S_t and B| is uniform when B is not empty. So a query with any value of symbol other
 * than +1 passes one trial with probability at most 1/2, and all 64 with at most 2^-64; a good
 * query always passes. Values must lie in [1, n) already (validateQueryRanges).
 *
 * Cost: the subset products are shared through tables, as in the blocked answer plan: per block
 * of 5 values, 26 products make its 32 subset products and each trial takes one more, so about
 * (26 + 64) / 5 = 18 products and one conversion per value, plus 64 Jacobi symbols, against one
 * Jacobi symbol per value (about 40-60 BigInt steps each) checked one by one. (Blocks of 4 and 6
 * cost 20 and 21 per value.) Uses engine slots [first, first + 64 + 32 * 32).
 */
export function valuesHaveJacobiOne(
  values: WireNumbers | readonly bigint[],
  engine: ProductEngine,
  first: number,
  random: (bytes: Uint8Array) => void = (bytes) => fillRandom(bytes),
  trials = JACOBI_TRIALS,
): boolean {
  const count = Array.isArray(values) ? values.length : (values as WireNumbers).count;
  const size = 2 ** BLOCK;
  const accumulators = first;
  const tables = first + trials;
  engine.ensureSlots(tables + BLOCKS_AT_ONCE * size);
  for (let t = 0; t < trials; t++) engine.setOne(accumulators + t);
  // Trial t takes value j when bit j of its row of random bits is set.
  const rowBytes = Math.ceil(count / 8);
  const chosen = new Uint8Array(trials * rowBytes);
  random(chosen);
  const maskOf = (t: number, start: number, width: number) => {
    let mask = 0;
    for (let k = 0; k < width; k++) {
      const j = start + k;
      if ((chosen[t * rowBytes + (j >> 3)]! >> (j & 7)) & 1) mask |= 1 << k;
    }
    return mask;
  };
  const batch = new Batch();
  for (let groupStart = 0; groupStart < count; groupStart += BLOCKS_AT_ONCE * BLOCK) {
    const blocks: Array<{ start: number; width: number; base: number }> = [];
    for (let start = groupStart; start < Math.min(count, groupStart + BLOCKS_AT_ONCE * BLOCK); start += BLOCK) {
      blocks.push({ start, width: Math.min(BLOCK, count - start), base: tables + blocks.length * size });
    }
    const singles: number[] = [];
    for (const { width, base } of blocks) for (let k = 0; k < width; k++) singles.push(base + (1 << k));
    const groupCount = singles.length;
    if (Array.isArray(values)) engine.setMany(singles, values.slice(groupStart, groupStart + groupCount));
    else engine.setManyWire(singles, values as WireNumbers, groupStart);
    // Table levels: every subset whose highest member is k, from the subset without it.
    for (let k = 1; k < BLOCK; k++) {
      const high = 1 << k;
      for (const { width, base } of blocks) {
        if (k >= width) continue;
        for (let s = high + 1; s < 2 * high; s++) batch.push(base + s, base + (s - high), base + high);
      }
      batch.run(engine);
    }
    // Each trial multiplies in its subset of each block (an accumulator once per batch).
    for (const { start, width, base } of blocks) {
      for (let t = 0; t < trials; t++) {
        const mask = maskOf(t, start, width);
        if (mask !== 0) batch.push(accumulators + t, accumulators + t, base + mask);
      }
      batch.run(engine);
    }
  }
  const n = engine.modulus;
  return engine.getMany(accumulators, trials).every((product) => jacobi(product, n) === 1);
}

/** Random bytes from the platform's CSPRNG, 65,536 at a time (the Web Crypto limit per call). */
function fillRandom(bytes: Uint8Array): void {
  for (let i = 0; i < bytes.length; i += 65536) crypto.getRandomValues(bytes.subarray(i, Math.min(bytes.length, i + 65536)));
}
