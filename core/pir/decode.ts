import { bytesToBigint } from '../bigint/bytes.ts';
import { legendre } from '../bigint/jacobi.ts';
import type { PirKeyPair } from './keys.ts';
import { wireNumberAt, type WireNumbers } from './wire.ts';

/** Random subsets the symbols modulo q are checked with (a row whose symbols differ escapes all with 2^-32). */
const CONSISTENCY_TRIALS = 32;

/** An answer read row by row: only the rows a client needs cost a Legendre symbol. */
export interface RowReader {
  /** The queried column's bit in answer row `row`, decoded on first use. RangeError naming the row on a bad value. */
  bit(row: number): 0 | 1;
  /** Checks that every row read so far has Jacobi symbol +1 (see decodeRows); RangeError naming a culprit row. */
  check(): void;
  /** How many distinct rows have been decoded. */
  readonly rowsRead: number;
}

/**
 * A reader of an answer's rows (as BigInts, or in place in an answer body from decodeAnswerWire).
 * A row's bit is 1 exactly when z_r is a non-residue modulo p (Legendre symbol -1).
 *
 * An honest answer has the same Legendre symbol modulo p and modulo q (Jacobi(z_r, n) = +1).
 * check() verifies that without a second symbol per row: for 32 random subsets S of the rows read,
 * the symbol modulo q of prod over S of z_r must be the product of their symbols modulo p (the
 * symbol is multiplicative), so a row whose two symbols differ, or that shares a factor with q,
 * escapes with probability 2^-32. When a subset disagrees, the rows are checked one by one to name
 * the first culprit. Catches most tampered or corrupted answers. Variable-time (client side).
 * `random` fills bytes (the platform's CSPRNG unless a test passes its own).
 */
export function rowReader(
  key: PirKeyPair,
  answer: readonly bigint[] | WireNumbers,
  random: (bytes: Uint8Array) => void = fillRandom,
): RowReader {
  const count = Array.isArray(answer) ? answer.length : (answer as WireNumbers).count;
  const rowAt = (r: number): bigint => (Array.isArray(answer) ? answer[r] : bytesToBigint(wireNumberAt(answer as WireNumbers, r)));
  const bits = new Map<number, 0 | 1>();
  const read: { row: number; bit: 0 | 1; modQ: bigint }[] = [];
  return {
    bit(row) {
      const known = bits.get(row);
      if (known !== undefined) return known;
      if (!Number.isSafeInteger(row) || row < 0 || row >= count) throw new RangeError(`decodeRows: expected a row in [0, ${count}), got ${row}`);
      const z = rowAt(row);
      if (typeof z !== 'bigint' || z < 1n || z >= key.n) throw new RangeError(`decodeRows: expected row ${row} in [1, n), got ${String(z).slice(0, 20)}`);
      const lp = legendre(z, key.p);
      if (lp === 0) throw symbolsDiffer(row, lp, legendre(z, key.q));
      const bit = lp === -1 ? 1 : 0;
      bits.set(row, bit);
      read.push({ row, bit, modQ: z % key.q });
      return bit;
    },
    check() {
      if (read.length === 0) return;
      const rowBytes = Math.ceil(read.length / 8);
      const chosen = new Uint8Array(CONSISTENCY_TRIALS * rowBytes);
      random(chosen);
      for (let t = 0; t < CONSISTENCY_TRIALS; t++) {
        let product = 1n;
        let flips = 0;
        for (let i = 0; i < read.length; i++) {
          if (!((chosen[t * rowBytes + (i >> 3)]! >> (i & 7)) & 1)) continue;
          product = (product * read[i]!.modQ) % key.q;
          flips ^= read[i]!.bit;
        }
        if (legendre(product, key.q) === (flips ? -1 : 1)) continue;
        // Some row's symbols differ: find the first, one by one.
        for (const { row, bit, modQ } of [...read].sort((a, b) => a.row - b.row)) {
          const lq = legendre(modQ, key.q);
          if (lq !== (bit ? -1 : 1)) throw symbolsDiffer(row, bit ? -1 : 1, lq);
        }
      }
    },
    get rowsRead() {
      return read.length;
    },
  };
}

/**
 * The bits of the queried column for answer rows [from, to), as 0/1 bytes, checked as rowReader
 * says. Throws RangeError naming the row for a z_r outside [1, n), sharing a factor with n, or of
 * Jacobi symbol -1, and unless 0 <= from <= to <= rows are integers.
 */
export function decodeRows(
  key: PirKeyPair,
  answer: readonly bigint[] | WireNumbers,
  from = 0,
  to = Array.isArray(answer) ? answer.length : (answer as WireNumbers).count,
  random: (bytes: Uint8Array) => void = fillRandom,
): Uint8Array {
  const count = Array.isArray(answer) ? answer.length : (answer as WireNumbers).count;
  if (!Number.isSafeInteger(from) || !Number.isSafeInteger(to) || from < 0 || to < from || to > count) {
    throw new RangeError(`decodeRows: expected 0 <= from <= to <= ${count}, got from=${from}, to=${to}`);
  }
  const reader = rowReader(key, answer, random);
  const out = new Uint8Array(to - from);
  for (let r = from; r < to; r++) out[r - from] = reader.bit(r);
  reader.check();
  return out;
}

/** The platform's CSPRNG, in the 65,536-byte pieces getRandomValues allows. */
function fillRandom(bytes: Uint8Array): void {
  for (let at = 0; at < bytes.length; at += 65536) crypto.getRandomValues(bytes.subarray(at, Math.min(bytes.length, at + 65536)));
}

function symbolsDiffer(row: number, lp: number, lq: number): RangeError {
  return new RangeError(`decodeRows: expected row ${row} to have Jacobi symbol +1 and no common factor with n, got (${lp}, ${lq}) modulo (p, q)`);
}
