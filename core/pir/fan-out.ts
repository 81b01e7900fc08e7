import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { choosePlan, type AnswerPlan } from './answer-plan.ts';

/**
 * Splitting one answer over several invocations: part i multiplies, per row, the values of
 * columns [from_i, to_i) (unblinded), and the coordinator multiplies the parts' row products and
 * blinds once. The split is by columns so every part reads only its own values of the query.
 */
export interface ColumnPart {
  readonly from: number;
  readonly to: number;
}

/**
 * Products per part unless the deployment says otherwise (FANOUT_PRODUCTS_PER_PART): 3-4 s of
 * CPU on the kernel at 2048 bits (1.5-1.8 us a product in `npm run bench`, the SDK's keys and
 * others), 6-7 s at 3072, so no invocation nears the Workers default of 30 s CPU per request
 * (developers.cloudflare.com/workers/platform/limits).
 */
export const DEFAULT_PRODUCTS_PER_PART = 2_000_000;

/** At most this many parts: each is a Worker invocation with its own CPU budget. */
export const MAX_PARTS = 8;

/**
 * Parts for an answer estimated at `products`: one part per `productsPerPart` (at least one,
 * at most MAX_PARTS), with column ranges of near-equal width.
 */
export function splitColumns(columns: number, products: number, productsPerPart: number): ColumnPart[] {
  if (!(productsPerPart > 0)) throw new RangeError(`splitColumns: expected productsPerPart > 0, got ${productsPerPart}`);
  const parts = Math.max(1, Math.min(MAX_PARTS, columns, Math.ceil(products / productsPerPart)));
  const out: ColumnPart[] = [];
  for (let i = 0; i < parts; i++) out.push({ from: Math.floor((i * columns) / parts), to: Math.floor(((i + 1) * columns) / parts) });
  return out;
}

/** The plan a part uses on its columns: the cheaper of plain and blocked there (mined plans span all columns). */
export function partPlan(slice: BitMatrix): AnswerPlan {
  return choosePlan(slice, { mined: false }).plan;
}
