import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { runSteps, type Steps } from '../steps/steps.ts';

/**
 * The mined plan: column sets that many rows share are multiplied once per query and reused.
 * Found offline from the matrix alone by pair replacement (as in grammar compression): each row
 * is its list of 1-columns; the most frequent adjacent pairs across rows become new symbols,
 * round after round, while a pair still saves products (a pair seen f times costs one product
 * and saves f). Symbols below `columns` are query values; symbol columns + i is rules[i], the
 * product of two earlier symbols.
 *
 * Deterministic (ties broken by symbol numbers), so a server may mine again from the stored
 * matrix instead of storing the result.
 */
export interface MinedPlan {
  readonly columns: number;
  /** rules[i] = [a, b]: symbol columns + i is symbol a times symbol b; a and b are older. */
  readonly rules: ReadonlyArray<readonly [number, number]>;
  /** Each row's symbols; their product is the row's product. */
  readonly rows: ReadonlyArray<Int32Array>;
}

/** A pair is worth a rule only when it appears at least this often (it then saves >= 2 products). */
const MIN_PAIR_COUNT = 3;
const MAX_ROUNDS = 24;

export function mineMatrix(m: BitMatrix): MinedPlan {
  return runSteps(mineSteps(m));
}

/** mineMatrix as steps (core/steps): a checkpoint after every round of pair replacement. */
export function* mineSteps(m: BitMatrix): Steps<MinedPlan> {
  let rows: Int32Array[] = [];
  for (let r = 0; r < m.rows; r++) rows.push(rowColumns(m, r));
  const rules: Array<[number, number]> = [];
  for (let round = 0; round < MAX_ROUNDS; round++) {
    const chosen = frequentPairs(rows);
    if (chosen.size === 0) break;
    const symbolOf = new Map<number, number>();
    for (const key of [...chosen.keys()].sort((a, b) => a - b)) {
      symbolOf.set(key, m.columns + rules.length);
      rules.push(splitKey(key));
    }
    rows = rows.map((row) => replacePairs(row, symbolOf));
    yield (round + 1) / MAX_ROUNDS;
  }
  return { columns: m.columns, rules, rows };
}

/** Products one answer costs with this plan, blinding (2 per row) included. */
export function minedProducts(plan: MinedPlan): number {
  let total = plan.rules.length;
  for (const row of plan.rows) total += Math.max(0, row.length - 1) + 2;
  return total;
}

// Pairs are keyed as a * 2^26 + b: symbols stay far below 2^26 (columns + rules).
const KEY = 2 ** 26;
const pairKey = (a: number, b: number) => a * KEY + b;
const splitKey = (key: number): [number, number] => [Math.floor(key / KEY), key % KEY];

/** Adjacent pairs seen at least MIN_PAIR_COUNT times, counted without overlaps inside a row. */
function frequentPairs(rows: readonly Int32Array[]): Map<number, number> {
  const counts = new Map<number, number>();
  for (const row of rows) {
    let last = -1;
    for (let i = 0; i + 1 < row.length; i++) {
      const key = pairKey(row[i]!, row[i + 1]!);
      if (key === last) {
        last = -1; // "x x x" holds one non-overlapping "x x", not two
        continue;
      }
      counts.set(key, (counts.get(key) ?? 0) + 1);
      last = key;
    }
  }
  const chosen = new Map<number, number>();
  for (const [key, count] of counts) if (count >= MIN_PAIR_COUNT) chosen.set(key, count);
  return chosen;
}

/** Left to right, each chosen pair becomes its symbol; a symbol takes part in one pair at most. */
function replacePairs(row: Int32Array, symbolOf: Map<number, number>): Int32Array {
  const out: number[] = [];
  for (let i = 0; i < row.length; i++) {
    const symbol = i + 1 < row.length ? symbolOf.get(pairKey(row[i]!, row[i + 1]!)) : undefined;
    if (symbol !== undefined) {
      out.push(symbol);
      i++;
    } else {
      out.push(row[i]!);
    }
  }
  return Int32Array.from(out);
}

function rowColumns(m: BitMatrix, r: number): Int32Array {
  const cols: number[] = [];
  for (let k = 0; k < m.wordsPerRow; k++) {
    let w = m.words[r * m.wordsPerRow + k]!;
    while (w !== 0) {
      cols.push((k << 5) + 31 - Math.clz32(w & -w));
      w &= w - 1;
    }
  }
  return Int32Array.from(cols);
}
