import { WorkerEntrypoint } from 'cloudflare:workers';
import type { BitMatrix } from '../../core/matrix/bit-matrix.ts';
import { sliceColumns } from '../../core/matrix/slice-columns.ts';
import type { AnswerPlan } from '../../core/pir/answer-plan.ts';
import { partPlan } from '../../core/pir/fan-out.ts';
import { unblindedRowProducts } from '../../core/pir/planned-answer.ts';
import { decodeQuery, encodeAnswer } from '../../core/pir/wire.ts';
import type { Env } from '../env.ts';
import { loadMatrix } from './version-cache.ts';
import { productEngine } from './product-engine.ts';

export interface PartRequest {
  /** Storage key of the matrix (content-addressed, so a part can never mix versions). */
  matrixKey: string;
  from: number;
  to: number;
  /** The query's modulus and its values for columns [from, to), in the query wire format. */
  query: Uint8Array;
}

export interface PartResult {
  /** Unblinded row products over the part's columns, in the answer wire format. */
  rows: Uint8Array;
  products: number;
}

/** Column slices and their plans, per isolate; keyed by matrix and range. */
const slices = new Map<string, { slice: BitMatrix; plan: AnswerPlan }>();

/**
 * One part of a fanned-out answer, reached only through the Worker's service binding to itself
 * (an RPC entrypoint has no URL). Its products are unblinded, so they never leave the Worker:
 * the coordinator combines the parts and blinds once.
 */
export class AnswerPart extends WorkerEntrypoint<Env> {
  async rowProducts(request: PartRequest): Promise<PartResult> {
    const key = `${request.matrixKey}:${request.from}-${request.to}`;
    let entry = slices.get(key);
    if (!entry) {
      const slice = sliceColumns(await loadMatrix(this.env, request.matrixKey), request.from, request.to);
      entry = { slice, plan: partPlan(slice) };
      if (slices.size >= 16) slices.delete(slices.keys().next().value!);
      slices.set(key, entry);
    }
    const { n, values } = decodeQuery(request.query);
    const { rows, products } = unblindedRowProducts(entry.slice, values, entry.plan, productEngine(n));
    return { rows: encodeAnswer((n.toString(2).length + 7) >> 3, rows), products };
  }
}
