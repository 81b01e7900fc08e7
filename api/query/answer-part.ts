import { WorkerEntrypoint } from 'cloudflare:workers';
import { sliceColumns } from '../../core/matrix/slice-columns.ts';
import { partPlan } from '../../core/pir/fan-out.ts';
import { unblindedIntoWire } from '../../core/pir/planned-answer.ts';
import { answerBody, decodeQueryWire } from '../../core/pir/wire.ts';
import type { Env } from '../env.ts';
import type { PartRequest, PartResult } from './part-messages.ts';
import { loadMatrix, matrixCache } from './version-cache.ts';
import { acquireEngine } from './product-engine.ts';

/**
 * One part of a fanned-out answer, reached only through the Worker's service binding to itself
 * (an RPC entrypoint has no URL). Its products are unblinded, so they never leave the Worker:
 * the coordinator combines the parts and blinds once.
 */
export class AnswerPart extends WorkerEntrypoint<Env> {
  async rowProducts(request: PartRequest): Promise<PartResult> {
    const key = `${request.matrixKey}:${request.from}-${request.to}`;
    // Column slices and their plans share the matrices' byte budget, keyed by matrix and range.
    let entry = matrixCache.get(key);
    if (!entry?.plan) {
      const slice = sliceColumns(await loadMatrix(this.env, request.matrixKey), request.from, request.to);
      entry = { matrix: slice, plan: partPlan(slice) };
      matrixCache.set(key, entry);
    }
    const { matrix, plan } = entry;
    const { n, values } = decodeQueryWire(request.query);
    const out = answerBody((n.toString(2).length + 7) >> 3, matrix.rows);
    const { engine, release } = acquireEngine(n);
    try {
      const products = unblindedIntoWire(matrix, values, plan ?? partPlan(matrix), engine, out.rows);
      return { rows: out.body, products };
    } finally {
      release();
    }
  }
}
