import { countOnes, type BitMatrix } from '../matrix/bit-matrix.ts';
import { randomBelow } from '../bigint/random.ts';

/**
 * The server's answer: z_r = s_r^2 * prod{ values[j] : M[r][j] = 1 } mod n for each row r, with a
 * fresh uniform non-zero s_r per row (the blinding that hides all but the residuosity of z_r).
 * Plain BigInt products, one per 1-bit; see answerMultiplications for the count.
 *
 * The query must already have passed validateQuery (this does not re-check residues or ranges).
 * Throws TypeError/RangeError only for a non-bigint, even or < 3 modulus, or a value count that
 * differs from matrix.columns. Variable-time in the matrix bits: the server knows the matrix.
 */
export function answerQuery(matrix: BitMatrix, n: bigint, values: readonly bigint[]): bigint[] {
  if (typeof n !== 'bigint') throw new TypeError(`answerQuery: expected bigint modulus, got ${typeof n}`);
  if (n < 3n || (n & 1n) === 0n) throw new RangeError(`answerQuery: expected odd modulus >= 3, got ${n}`);
  if (values.length !== matrix.columns) {
    throw new RangeError(`answerQuery: expected ${matrix.columns} values, got ${values.length}`);
  }
  const out = new Array<bigint>(matrix.rows);
  for (let r = 0; r < matrix.rows; r++) {
    // Zero is the only draw to refuse: the server cannot test gcd(s, n) cheaply, and a draw
    // sharing a factor with n turns up with probability about 2^-1023.
    let s = 0n;
    while (s === 0n) s = randomBelow(n);
    out[r] = rowProduct(matrix, r, values, n, (s * s) % n);
  }
  return out;
}

/** start * prod{ values[j] : M[row][j] = 1 } mod n, one BigInt product per 1-bit. */
function rowProduct(matrix: BitMatrix, row: number, values: readonly bigint[], n: bigint, start: bigint): bigint {
  let acc = start;
  const base = row * matrix.wordsPerRow;
  for (let k = 0; k < matrix.wordsPerRow; k++) {
    let word = matrix.words[base + k]!;
    while (word !== 0) {
      const bit = 31 - Math.clz32(word & -word);
      word &= word - 1;
      acc = (acc * values[(k << 5) + bit]!) % n;
    }
  }
  return acc;
}

/**
 * Modular multiplications the plain answer costs: one per 1-bit, plus two per row for the
 * blinding (s_r^2 and the product with it). The metered work count.
 */
export function answerMultiplications(matrix: BitMatrix): number {
  return countOnes(matrix) + 2 * matrix.rows;
}
