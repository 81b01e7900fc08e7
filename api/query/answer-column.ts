import type { Context } from 'hono';
import type { PlanRecord } from '../../core/geo/manifest.ts';
import { splitColumns } from '../../core/pir/fan-out.ts';
import { ALLOWED_MODULUS_BITS } from '../../core/pir/params.ts';
import { answerWithPlan } from '../../core/pir/planned-answer.ts';
import { validateQuery } from '../../core/pir/validate.ts';
import { decodeQuery, encodeAnswer, queryByteLength } from '../../core/pir/wire.ts';
import type { Database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { recordAnsweredQuery } from '../metering/record-usage.ts';
import { answerByParts } from './fanned-answer.ts';
import { productEngine } from './product-engine.ts';
import { answerPlanFor, loadMatrix } from './version-cache.ts';

/** About 10-15 s of plain BigInt products: above it, one answer is split over parts. */
const DEFAULT_PRODUCTS_PER_PART = 2_000_000;

/** A bit matrix a version answers column queries on: its cell matrix or its details matrix. */
export interface AnswerTarget {
  matrixKey: string;
  contentHash: string;
  columns: number;
  plan: PlanRecord;
  /** Names the step in Server-Timing, e.g. "answer" or "details". */
  label: string;
}

/**
 * Reads, checks and answers one PIR query on `target`, meters it and returns the answer in the
 * wire format (core/pir/WIRE.md). Shared by the locate and details rounds: to the server both
 * are one column of a bit matrix.
 */
export async function answerColumnQuery(
  c: Context<AppBindings>,
  db: Database,
  metered: { datasetId: string; version: number },
  target: AnswerTarget,
): Promise<Response> {
  const largest = queryByteLength(Math.max(...ALLOWED_MODULUS_BITS), target.columns);
  const declared = Number(c.req.header('content-length') ?? '0');
  if (declared > largest) {
    throw new ApiError(413, 'body_too_large', `body: a query on this matrix is at most ${largest} bytes, got ${declared}`, 'body');
  }
  const body = new Uint8Array(await c.req.arrayBuffer());
  if (body.length > largest) throw new ApiError(413, 'body_too_large', `body: a query on this matrix is at most ${largest} bytes`, 'body');
  const started = performance.now();
  const { n, values } = decodeQuery(body);
  validateQuery(n, values, target.columns);
  const matrix = await loadMatrix(c.env, target.matrixKey);
  const perPart = Number(c.env.FANOUT_PRODUCTS_PER_PART ?? DEFAULT_PRODUCTS_PER_PART);
  const parts = splitColumns(target.columns, target.plan.products, perPart);
  const { rows, products: multiplications } =
    parts.length > 1 && c.env.PARTS
      ? await answerByParts(matrix, target.matrixKey, n, values, parts, (request) => c.env.PARTS!.rowProducts(request))
      : // The plan the build chose for this matrix (recorded in its manifest).
        answerWithPlan(matrix, values, answerPlanFor(target.plan, target.contentHash, matrix), productEngine(n));
  const answer = encodeAnswer((n.toString(2).length + 7) >> 3, rows);
  const serverMs = performance.now() - started;
  c.executionCtx.waitUntil(
    recordAnsweredQuery(db, {
      credentialId: c.var.credentialId,
      datasetId: metered.datasetId,
      version: metered.version,
      bytesIn: body.length,
      bytesOut: answer.length,
      multiplications,
    }),
  );
  return c.body(answer.buffer as ArrayBuffer, 200, {
    'Content-Type': 'application/octet-stream',
    'Server-Timing': `${target.label};dur=${serverMs.toFixed(1)};desc="PIR answer"`,
    'X-Nearveil-Multiplications': String(multiplications),
    'Cache-Control': 'no-store',
  });
}
