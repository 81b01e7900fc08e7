import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { rowBlockBits, type AnswerPlan } from './answer-plan.ts';
import type { MinedPlan } from './mined-plan.ts';
import { Batch } from './product-batch.ts';
import type { ProductEngine } from './product-engine.ts';
import type { WireNumbers } from './wire.ts';

/** A query's values: BigInts, or the numbers of a wire body in place (the server's path). */
export type QueryValues = readonly bigint[] | WireNumbers;

/** Time spent in each phase of an answer, in milliseconds (for Server-Timing and the bench). */
export interface AnswerPhases {
  /** Values from their wire bytes (or BigInts) into the engine's slots. */
  in: number;
  /** The plan's products. */
  products: number;
  /** Drawing s_r and multiplying in s_r^2. */
  blinding: number;
  /** Rows out of the engine into the answer body (or BigInts). */
  out: number;
}

export const noPhases = (): AnswerPhases => ({ in: 0, products: 0, blinding: 0, out: 0 });

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
export function answerWithPlan(matrix: BitMatrix, values: QueryValues, plan: AnswerPlan, engine: ProductEngine): { rows: bigint[]; products: number } {
  const products = runPlan(matrix, values, plan, engine, true, noPhases());
  return { rows: engine.getMany(0, matrix.rows), products };
}

/**
 * answerWithPlan writing the rows straight into `out` (an answer body's rows, answerBody in
 * wire.ts): the server's path, with no BigInt or hex per number. Returns the products; `phases`
 * collects the time of each step.
 */
export function answerIntoWire(matrix: BitMatrix, values: QueryValues, plan: AnswerPlan, engine: ProductEngine, out: WireNumbers, phases = noPhases()): number {
  const products = runPlan(matrix, values, plan, engine, true, phases);
  const t0 = performance.now();
  engine.getManyWire(0, matrix.rows, out, 0);
  phases.out += performance.now() - t0;
  return products;
}

/**
 * The same without blinding: prod{ y_j : M[r][j] = 1 } mod n per row (1 for an empty row).
 * Never sent to a client (it would reveal more than one column): a part of a fanned-out answer
 * returns these to the invocation that blinds, and tests compare plans and engines with it.
 */
export function unblindedRowProducts(matrix: BitMatrix, values: QueryValues, plan: AnswerPlan, engine: ProductEngine): { rows: bigint[]; products: number } {
  const products = runPlan(matrix, values, plan, engine, false, noPhases());
  return { rows: engine.getMany(0, matrix.rows), products };
}

/** unblindedRowProducts writing the rows into `out` (a part's answer body). */
export function unblindedIntoWire(matrix: BitMatrix, values: QueryValues, plan: AnswerPlan, engine: ProductEngine, out: WireNumbers): number {
  const products = runPlan(matrix, values, plan, engine, false, noPhases());
  engine.getManyWire(0, matrix.rows, out, 0);
  return products;
}

/** Runs the plan; the rows are left in slots [0, R) (an empty row as 1). */
function runPlan(matrix: BitMatrix, values: QueryValues, plan: AnswerPlan, engine: ProductEngine, blinded: boolean, phases: AnswerPhases): number {
  if (countOf(values) !== matrix.columns) {
    throw new RangeError(`answerWithPlan: expected ${matrix.columns} values, got ${countOf(values)}`);
  }
  const R = matrix.rows;
  const started = new Uint8Array(R);
  const working = plan.kind === 'plain' ? matrix.columns : plan.kind === 'blocked' ? TABLES_AT_ONCE * 2 ** plan.blockColumns : matrix.columns + plan.mined.rules.length;
  engine.ensureSlots(R + working + blindingSlots(R));
  const t0 = performance.now();
  const load = loader(values, phases);
  let products =
    plan.kind === 'plain'
      ? plainProducts(matrix, load, engine, started)
      : plan.kind === 'blocked'
        ? blockedProducts(matrix, load, plan.blockColumns, engine, started)
        : minedRowProducts(plan.mined, load, engine, started);
  const t1 = performance.now();
  phases.products += t1 - t0 - load.ms();
  if (blinded) products += blind(engine, R, R + working, started);
  else for (let r = 0; r < R; r++) if (!started[r]) engine.setOne(r);
  phases.blinding += performance.now() - t1;
  return products;
}

const countOf = (values: QueryValues) => (isWire(values) ? values.count : values.length);
const isWire = (values: QueryValues): values is WireNumbers => !Array.isArray(values);

/** Puts values[from + i] into targets[i], timing itself into phases.in. */
interface Loader {
  (engine: ProductEngine, targets: ArrayLike<number>, from: number): void;
  ms(): number;
}

function loader(values: QueryValues, phases: AnswerPhases): Loader {
  let spent = 0;
  const load = ((engine: ProductEngine, targets: ArrayLike<number>, from: number) => {
    const t0 = performance.now();
    if (isWire(values)) engine.setManyWire(targets, values, from);
    else engine.setMany(targets, values.slice(from, from + targets.length));
    const ms = performance.now() - t0;
    spent += ms;
    phases.in += ms;
  }) as Loader;
  load.ms = () => spent;
  return load;
}

/** Slots first, first + 1, ..., first + count - 1. */
function consecutive(first: number, count: number): Uint32Array {
  return Uint32Array.from({ length: count }, (_, i) => first + i);
}

/** Plain: each row multiplies the values of its 1-columns. */
function plainProducts(m: BitMatrix, load: Loader, engine: ProductEngine, started: Uint8Array): number {
  const R = m.rows;
  load(engine, consecutive(R, m.columns), 0);
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
function minedRowProducts(mined: MinedPlan, load: Loader, engine: ProductEngine, started: Uint8Array): number {
  const R = mined.rows.length;
  // Symbol s lives in slot R + s: values first, then rules in order.
  load(engine, consecutive(R, mined.columns), 0);
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
function blockedProducts(m: BitMatrix, load: Loader, b: number, engine: ProductEngine, started: Uint8Array): number {
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
    // The group's columns are consecutive: its values go into the tables' single-member entries.
    const singles: number[] = [];
    for (const { width, base } of blocks) for (let k = 0; k < width; k++) singles.push(base + (1 << k));
    load(engine, singles, groupStart);
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
 * row products, then the blinding. Products: (parts - 1) per row plus two per row. Parts come as
 * BigInts or as the rows of the parts' answer bodies in place; with `out`, the rows go straight
 * into an answer body and `rows` is empty.
 */
export function combineParts(parts: ReadonlyArray<QueryValues>, engine: ProductEngine, out?: WireNumbers, phases = noPhases()): { rows: bigint[]; products: number } {
  const R = parts.length > 0 ? countOf(parts[0]!) : 0;
  if (parts.length === 0 || parts.some((p) => countOf(p) !== R)) {
    throw new RangeError(`combineParts: expected parts of equal length, got ${parts.map(countOf).join(', ') || 'none'}`);
  }
  engine.ensureSlots(R * parts.length + blindingSlots(R));
  const started = new Uint8Array(R).fill(1);
  // Part i's row r in slot R * i + r; the first part's rows are the accumulators.
  parts.forEach((part, i) => loader(part, phases)(engine, consecutive(R * i, R), 0));
  let products = 0;
  const t0 = performance.now();
  const batch = new Batch();
  for (let i = 1; i < parts.length; i++) {
    for (let r = 0; r < R; r++) batch.push(r, r, R * i + r);
    products += batch.run(engine);
  }
  const t1 = performance.now();
  phases.products += t1 - t0;
  products += blind(engine, R, R * parts.length, started);
  const t2 = performance.now();
  phases.blinding += t2 - t1;
  if (!out) return { rows: engine.getMany(0, R), products };
  engine.getManyWire(0, R, out, 0);
  phases.out += performance.now() - t2;
  return { rows: [], products };
}
