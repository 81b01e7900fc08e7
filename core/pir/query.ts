import { randomBelow } from '../bigint/random.ts';
import type { PirKeyPair } from './keys.ts';

/**
 * A fresh query for one column: y_j = r_j^2 mod n for j != column and y_column = w * r_column^2
 * mod n, each r_j a new uniform unit. Every y_j has Jacobi symbol +1; only the key holder can
 * tell which one is a non-residue. Never reuse a query for another column or request.
 * Throws RangeError unless columns is an integer >= 1 and 0 <= column < columns.
 * Variable-time (client side).
 */
export function makeQuery(key: PirKeyPair, columns: number, column: number): bigint[] {
  if (!Number.isSafeInteger(columns) || columns < 1) throw new RangeError(`makeQuery: expected integer columns >= 1, got ${columns}`);
  if (!Number.isSafeInteger(column) || column < 0 || column >= columns) {
    throw new RangeError(`makeQuery: expected column in [0, ${columns}), got ${column}`);
  }
  const { n, w } = key;
  const values = new Array<bigint>(columns);
  for (let j = 0; j < columns; j++) {
    const r = randomUnitOf(key);
    const square = (r * r) % n;
    values[j] = j === column ? (w * square) % n : square;
  }
  return values;
}

/**
 * Uniform r in [1, n) with gcd(r, n) = 1. The key holder knows p and q, so two reductions
 * replace a gcd (about ten times cheaper); a non-unit turns up with probability about 2^-1023.
 */
function randomUnitOf(key: PirKeyPair): bigint {
  for (;;) {
    const r = randomBelow(key.n);
    if (r !== 0n && r % key.p !== 0n && r % key.q !== 0n) return r;
  }
}
