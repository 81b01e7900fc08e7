import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { mineSteps, minedProducts, type MinedPlan } from './mined-plan.ts';
import { part, runSteps, type Steps } from '../steps/steps.ts';

/**
 * How the server computes an answer; every plan gives the same products, only the work differs.
 * - plain: one product per 1-bit of a row (after the first, which is a copy);
 * - blocked: columns in blocks of b; per query and block, the 2^b subset products of the block's
 *   values are tabulated (one product per entry beyond the singles), then each row takes one
 *   product per block where its b bits are not all zero (the "method of four Russians").
 * - mined: column sets shared by many rows are multiplied once and reused (mined-plan.ts).
 * All add two products per row for the blinding.
 */
export type AnswerPlan =
  | { readonly kind: 'plain' }
  | { readonly kind: 'blocked'; readonly blockColumns: number }
  | { readonly kind: 'mined'; readonly mined: MinedPlan };

export const MAX_BLOCK_COLUMNS = 12;

/** The b bits of `row` at columns [start, start + width), column `start` as the lowest bit. */
export function rowBlockBits(m: BitMatrix, row: number, start: number, width: number): number {
  const base = row * m.wordsPerRow + (start >>> 5);
  const offset = start & 31;
  let bits = m.words[base]! >>> offset;
  if (offset + width > 32) bits |= m.words[base + 1]! << (32 - offset);
  return width === 32 ? bits >>> 0 : bits & ((1 << width) - 1);
}

/** Products for the table of a block of `width` columns: 2^width - 1 entries, `width` of them copies. */
export function tableProducts(width: number): number {
  return 2 ** width - 1 - width;
}

/**
 * Exact modular products `plan` costs on `m`, blinding included (2 per row). Reading every row
 * once per block, so O(rows * columns / b): cheap next to a single answer.
 */
export function planProducts(m: BitMatrix, plan: AnswerPlan): number {
  if (plan.kind === 'mined') return minedProducts(plan.mined);
  const blinding = 2 * m.rows;
  if (plan.kind === 'plain') {
    let total = blinding;
    for (let r = 0; r < m.rows; r++) total += Math.max(0, rowOnes(m, r) - 1);
    return total;
  }
  const b = plan.blockColumns;
  let total = blinding;
  for (let start = 0; start < m.columns; start += b) total += tableProducts(Math.min(b, m.columns - start));
  for (let r = 0; r < m.rows; r++) {
    let used = 0;
    for (let start = 0; start < m.columns; start += b) if (rowBlockBits(m, r, start, Math.min(b, m.columns - start)) !== 0) used++;
    total += Math.max(0, used - 1);
  }
  return total;
}

function rowOnes(m: BitMatrix, r: number): number {
  let count = 0;
  for (let k = 0; k < m.wordsPerRow; k++) {
    let w = m.words[r * m.wordsPerRow + k]!;
    while (w !== 0) {
      w &= w - 1;
      count++;
    }
  }
  return count;
}

export interface PlanChoice {
  readonly plan: AnswerPlan;
  readonly products: number;
  /** Every plan weighed, so a provider can see why this one won. */
  readonly weighed: ReadonlyArray<{ plan: AnswerPlan; products: number }>;
}

/**
 * The plan with the fewest products on this matrix (ties to the earlier weighed: plain, then
 * smaller blocks, then mined). Dense random matrices favour blocks of 6-10 columns; cell
 * matrices, whose regions repeat neighbouring sites, tend to favour mined column sets.
 */
export function choosePlan(m: BitMatrix, options: { mined?: boolean } = {}): PlanChoice {
  return runSteps(choosePlanSteps(m, options));
}

/** choosePlan as steps (core/steps): a checkpoint after every plan weighed and every mining round. */
export function* choosePlanSteps(m: BitMatrix, options: { mined?: boolean } = {}): Steps<PlanChoice> {
  const weighed: Array<{ plan: AnswerPlan; products: number }> = [{ plan: { kind: 'plain' }, products: planProducts(m, { kind: 'plain' }) }];
  const plans = Math.min(MAX_BLOCK_COLUMNS, m.columns);
  for (let b = 2; b <= plans; b++) {
    const plan: AnswerPlan = { kind: 'blocked', blockColumns: b };
    weighed.push({ plan, products: planProducts(m, plan) });
    yield (b / plans) * (options.mined !== false ? 0.3 : 1);
  }
  if (options.mined !== false) {
    const mined: AnswerPlan = { kind: 'mined', mined: yield* part(mineSteps(m), 0.3, 0.7) };
    weighed.push({ plan: mined, products: planProducts(m, mined) });
  }
  const best = weighed.reduce((a, c) => (c.products < a.products ? c : a));
  return { plan: best.plan, products: best.products, weighed };
}
