import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { rowBlockBits, type AnswerPlan } from './answer-plan.ts';
import type { MinedPlan } from './mined-plan.ts';
import type { ProductEngine } from './product-engine.ts';

/**
 * The answer z_r = s_r^2 * prod{ y_j : M[r][j] = 1 } mod n computed by `plan` on `engine`.
 * Same meaning as answerQuery (the plain BigInt reference); the products are batched so an
 * engine with parallel lanes stays busy. Returns the rows and the products done (for metering).
 *
 * Slots used: [0, R) row accumulators, then the plan's working slots, then the blinding's
 * (2 x min(R, BLINDING_CHUNK)). Memory: R accumulators plus the blocked plan's TABLES_AT_ONCE
 * tables, or the C values (plain), or the C values and mined rules (mined).
 * The query must have passed validateQuery. Variable-time in the matrix (public to the server).
 */
export function answerWithPlan(
  matrix: BitMatrix,
  values: readonly bigint[],
  plan: AnswerPlan,
  engine: ProductEngine,
): { rows: bigint[]; products: number } {
  return runPlan(matrix, values, plan, engine, true);
}

/**
 * The same without blinding: prod{ y_j : M[r][j] = 1 } mod n per row (1 for an empty row).
 * Never sent to a client (it would reveal more than one column); it exists so tests can compare
 * every plan and engine with a plain reference product.
 */
export function unblindedRowProducts(matrix: BitMatrix, values: readonly bigint[], plan: AnswerPlan, engine: ProductEngine): { rows: bigint[]; products: number } {
  return runPlan(matrix, values, plan, engine, false);
}

function runPlan(matrix: BitMatrix, values: readonly bigint[], plan: AnswerPlan, engine: ProductEngine, blinded: boolean) {
  if (values.length !== matrix.columns) {
    throw new RangeError(`answerWithPlan: expected ${matrix.columns} values, got ${values.length}`);
  }
  const R = matrix.rows;
  const started = new Uint8Array(R);
  const working = plan.kind === 'plain' ? matrix.columns : plan.kind === 'blocked' ? TABLES_AT_ONCE * 2 ** plan.blockColumns : matrix.columns + plan.mined.rules.length;
  engine.ensureSlots(R + working + blindingSlots(R));
  let products =
    plan.kind === 'plain'
      ? plainProducts(matrix, values, engine, started)
      : plan.kind === 'blocked'
        ? blockedProducts(matrix, values, plan.blockColumns, engine, started)
        : minedRowProducts(plan.mined, values, engine, started);
  if (blinded) products += blind(engine, R, R + working, started);
  const rows = engine.getMany(0, R);
  if (!blinded) for (let r = 0; r < R; r++) if (!started[r]) rows[r] = 1n;
  return { rows, products };
}

/** Slots first, first + 1, ..., first + count - 1. */
function consecutive(first: number, count: number): Uint32Array {
  return Uint32Array.from({ length: count }, (_, i) => first + i);
}

/** Scratch index arrays for multiplyMany, grown on demand. */
class Batch {
  out = new Uint32Array(64);
  left = new Uint32Array(64);
  right = new Uint32Array(64);
  count = 0;
  push(out: number, left: number, right: number): void {
    if (this.count === this.out.length) {
      const grow = (a: Uint32Array) => {
        const b = new Uint32Array(a.length * 2);
        b.set(a);
        return b;
      };
      this.out = grow(this.out);
      this.left = grow(this.left);
      this.right = grow(this.right);
    }
    this.out[this.count] = out;
    this.left[this.count] = left;
    this.right[this.count] = right;
    this.count++;
  }
  run(engine: ProductEngine): number {
    const done = this.count;
    if (done > 0) engine.multiplyMany(this.out, this.left, this.right, done);
    this.count = 0;
    return done;
  }
}

/** Plain: each row multiplies the values of its 1-columns. */
function plainProducts(m: BitMatrix, values: readonly bigint[], engine: ProductEngine, started: Uint8Array): number {
  const R = m.rows;
  engine.setMany(consecutive(R, m.columns), values);
  const rows: number[][] = [];
  for (let r = 0; r < R; r++) {
    const cols: number[] = [];
    for (let k = 0; k < m.wordsPerRow; k++) {
      let w = m.words[r * m.wordsPerRow + k]!;
      while (w !== 0) {
        cols.push(R + (k << 5) + 31 - Math.clz32(w & -w));
        w &= w - 1;
      }
    }
    rows.push(cols);
  }
  return multiplyRows(rows, engine, started);
}

/**
 * Each row r's accumulator becomes the product of the slots listed for it: the first is copied,
 * then round t multiplies every row that has more than t slots by its t-th (one batch a round).
 */
function multiplyRows(rows: ReadonlyArray<ArrayLike<number>>, engine: ProductEngine, started: Uint8Array): number {
  let longest = 0;
  rows.forEach((slots, r) => {
    if (slots.length > 0) {
      engine.copy(r, slots[0]!);
      started[r] = 1;
    }
    longest = Math.max(longest, slots.length);
  });
  const batch = new Batch();
  let products = 0;
  for (let t = 1; t < longest; t++) {
    rows.forEach((slots, r) => {
      if (t < slots.length) batch.push(r, r, slots[t]!);
    });
    products += batch.run(engine);
  }
  return products;
}

/** Mined: the shared column sets first (level by level, so each batch is independent), then rows. */
function minedRowProducts(mined: MinedPlan, values: readonly bigint[], engine: ProductEngine, started: Uint8Array): number {
  const R = mined.rows.length;
  // Symbol s lives in slot R + s: values first, then rules in order.
  engine.setMany(consecutive(R, mined.columns), values);
  const depth = new Int32Array(mined.columns + mined.rules.length);
  const levels: number[][] = [];
  mined.rules.forEach(([a, b], i) => {
    const d = 1 + Math.max(depth[a]!, depth[b]!);
    depth[mined.columns + i] = d;
    (levels[d - 1] ??= []).push(i);
  });
  const batch = new Batch();
  let products = 0;
  for (const level of levels) {
    for (const i of level) {
      const [a, b] = mined.rules[i]!;
      batch.push(R + mined.columns + i, R + a, R + b);
    }
    products += batch.run(engine);
  }
  const rows = mined.rows.map((symbols) => Array.from(symbols, (s) => R + s));
  return products + multiplyRows(rows, engine, started);
}

/** Blocked: per block of b columns, a table of subset products, then one product per row. */
function blockedProducts(m: BitMatrix, values: readonly bigint[], b: number, engine: ProductEngine, started: Uint8Array): number {
  const R = m.rows;
  const size = 2 ** b;
  const batch = new Batch();
  let products = 0;
  // TABLES_AT_ONCE blocks share each table level's batch, so small levels still fill the lanes.
  const span = TABLES_AT_ONCE * b;
  for (let groupStart = 0; groupStart < m.columns; groupStart += span) {
    const blocks: Array<{ start: number; width: number; base: number }> = [];
    for (let start = groupStart; start < Math.min(m.columns, groupStart + span); start += b) {
      blocks.push({ start, width: Math.min(b, m.columns - start), base: R + blocks.length * size });
    }
    const singles: number[] = [];
    const singleValues: bigint[] = [];
    for (const { start, width, base } of blocks) {
      for (let k = 0; k < width; k++) {
        singles.push(base + (1 << k));
        singleValues.push(values[start + k]!);
      }
    }
    engine.setMany(singles, singleValues);
    // Level k: every subset whose highest member is k, from the subset without it (independent).
    for (let k = 1; k < b; k++) {
      const high = 1 << k;
      for (const { width, base } of blocks) {
        if (k >= width) continue;
        for (let s = high + 1; s < 2 * high; s++) batch.push(base + s, base + (s - high), base + high);
      }
      products += batch.run(engine);
    }
    // Rows: one batch per block, as a row's accumulator may take part once per batch.
    for (const { start, width, base } of blocks) {
      for (let r = 0; r < R; r++) {
        const bits = rowBlockBits(m, r, start, width);
        if (bits === 0) continue;
        if (started[r]) batch.push(r, r, base + bits);
        else {
          engine.copy(r, base + bits);
          started[r] = 1;
        }
      }
      products += batch.run(engine);
    }
  }
  return products;
}

/** Blocks whose tables are built together (memory: this many tables of 2^b slots). */
export const TABLES_AT_ONCE = 8;

/** Rows blinded at a time: the blinding's working slots (s and s^2) stay 2 x this, whatever R is. */
export const BLINDING_CHUNK = 1024;

/** Working slots of the blinding for R rows. */
export const blindingSlots = (R: number) => 2 * Math.min(R, BLINDING_CHUNK);

/** z_r = acc_r * s_r^2 with a fresh uniform non-zero s_r per row: two products per row. */
function blind(engine: ProductEngine, R: number, sBase: number, started: Uint8Array): number {
  const chunk = Math.min(R, BLINDING_CHUNK);
  const squareBase = sBase + chunk;
  const batch = new Batch();
  let products = 0;
  for (let from = 0; from < R; from += chunk) {
    const to = Math.min(R, from + chunk);
    for (let r = from; r < to; r++) {
      if (!started[r]) engine.setOne(r);
      // A non-unit s (sharing a factor with n) turns up with probability about 2^-1023.
      engine.setRandomNonZero(sBase + r - from);
      batch.push(squareBase + r - from, sBase + r - from, sBase + r - from);
    }
    products += batch.run(engine);
    for (let r = from; r < to; r++) batch.push(r, r, squareBase + r - from);
    products += batch.run(engine);
  }
  return products;
}

/**
 * The coordinator's step of a fanned-out answer: per row, the product of the parts' unblinded
 * row products, then the blinding. Products: (parts - 1) per row plus two per row.
 */
export function combineParts(parts: ReadonlyArray<readonly bigint[]>, engine: ProductEngine): { rows: bigint[]; products: number } {
  const R = parts[0]?.length ?? 0;
  if (parts.length === 0 || parts.some((p) => p.length !== R)) {
    throw new RangeError(`combineParts: expected parts of equal length, got ${parts.map((p) => p.length).join(', ') || 'none'}`);
  }
  engine.ensureSlots(R * parts.length + blindingSlots(R));
  const started = new Uint8Array(R).fill(1);
  // Part i's row r in slot R * i + r; the first part's rows are the accumulators.
  parts.forEach((part, i) => engine.setMany(consecutive(R * i, R), part));
  let products = 0;
  const batch = new Batch();
  for (let i = 1; i < parts.length; i++) {
    for (let r = 0; r < R; r++) batch.push(r, r, R * i + r);
    products += batch.run(engine);
  }
  products += blind(engine, R, R * parts.length, started);
  return { rows: engine.getMany(0, R), products };
}
