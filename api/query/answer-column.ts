import type { Context } from 'hono';
import type { PlanRecord } from '../../core/geo/manifest.ts';
import { DEFAULT_PRODUCTS_PER_PART, splitColumns } from '../../core/pir/fan-out.ts';
import { ALLOWED_MODULUS_BITS, PRODUCT_WEIGHT } from '../../core/pir/params.ts';
import { valuesHaveJacobiOne } from '../../core/pir/jacobi-batch.ts';
import { answerIntoWire, noPhases } from '../../core/pir/planned-answer.ts';
import { validateModulus, validateQuery, validateQueryRanges } from '../../core/pir/validate.ts';
import type { ProductEngine } from '../../core/pir/product-engine.ts';
import { answerBody, decodeQueryWire, queryByteLength, wireNumbersToBigints, type WireNumbers } from '../../core/pir/wire.ts';
import type { Database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { readLimitedBytes } from '../http/body-limit.ts';
import { secondsToNextMonth, utcMonth } from '../metering/calendar.ts';
import { releaseQuotaSlot, takeQuotaSlot } from '../metering/quota.ts';
import { recordAnsweredQuery } from '../metering/record-usage.ts';
import { requireProvenModulus } from '../moduli/proven-moduli.ts';
import { answerByParts } from './fanned-answer.ts';
import { acquireEngine } from './product-engine.ts';
import { phaseClock } from './phase-clock.ts';
import { answerPlanFor, loadMatrix } from './version-cache.ts';

/** A bit matrix a version answers column queries on: its cell matrix or its details matrix. */
export interface AnswerTarget {
  matrixKey: string;
  contentHash: string;
  columns: number;
  plan: PlanRecord;
  /** Names the step in Server-Timing: "answer" (locate round) or "details". */
  label: string;
}

/**
 * Reads, checks and answers one PIR query on `target`, takes a quota slot, meters it and returns
 * the answer in the wire format (core/pir/WIRE.md). Shared by the locate and details rounds: to
 * the server both are one column of a bit matrix, and both count as one query.
 *
 * The values never become BigInts: they are range-checked on their bytes, their Jacobi symbols
 * checked by random subset products on the kernel (core/pir/jacobi-batch.ts), moved into the
 * kernel from the body and the answer rows written straight into the answer body. The
 * Server-Timing header gives the whole time first (what the SDK reads), then each phase.
 */
export async function answerColumnQuery(
  c: Context<AppBindings>,
  db: Database,
  metered: { datasetId: string; version: number },
  target: AnswerTarget,
): Promise<Response> {
  const largest = queryByteLength(Math.max(...ALLOWED_MODULUS_BITS), target.columns);
  // The exact size a query on this matrix can have, checked as the body streams in.
  const body = await readLimitedBytes(c.req.raw, largest);
  const clock = phaseClock();
  const { n, values } = decodeQueryWire(body);
  clock.lap('decode');
  // Only a proven modulus leaves one bit per answer row (core/modulus-proof): checked first.
  validateModulus(n);
  await requireProvenModulus(db, n);
  clock.skip();
  validateQueryRanges(n, values, target.columns);
  const { engine, release } = acquireEngine(n);
  try {
    return await checkAndAnswer(c, db, metered, target, { body, n, values, engine, clock });
  } finally {
    release();
  }
}

/** The rest of answerColumnQuery, on an engine of its own: the Jacobi check, the quota, the answer. */
async function checkAndAnswer(
  c: Context<AppBindings>,
  db: Database,
  metered: { datasetId: string; version: number },
  target: AnswerTarget,
  query: { body: Uint8Array; n: bigint; values: WireNumbers; engine: ProductEngine; clock: ReturnType<typeof phaseClock> },
): Promise<Response> {
  const { body, n, values, engine, clock } = query;
  if (!valuesHaveJacobiOne(values, engine, 0)) {
    // Some value's symbol is not +1: name the first, as the one-by-one check does.
    validateQuery(n, wireNumbersToBigints(values), target.columns);
    throw new Error('valuesHaveJacobiOne refused a query whose every value has Jacobi symbol +1');
  }
  clock.lap('check');
  // The quota slot is taken only for a well-formed query, and given back if no answer goes out.
  const now = new Date();
  const month = utcMonth(now);
  if (!(await takeQuotaSlot(db, c.var.credentialId, month, c.var.monthlyQuota))) {
    const retryAfter = secondsToNextMonth(now);
    throw new ApiError(429, 'quota_exceeded', `this API key has used its ${c.var.monthlyQuota} queries for ${month}; the quota renews in ${retryAfter} s (next UTC month)`, 'authorization', {
      'Retry-After': String(retryAfter),
    });
  }
  clock.skip();
  let answer: Uint8Array;
  let multiplications: number;
  const phases = noPhases();
  try {
    const matrix = await loadMatrix(c.env, target.matrixKey);
    const perPart = Number(c.env.FANOUT_PRODUCTS_PER_PART ?? DEFAULT_PRODUCTS_PER_PART);
    const parts = splitColumns(target.columns, target.plan.products, perPart);
    const out = answerBody((n.toString(2).length + 7) >> 3, matrix.rows);
    clock.skip();
    multiplications =
      parts.length > 1 && c.env.PARTS
        ? await answerByParts(matrix, target.matrixKey, n, values, parts, (request) => c.env.PARTS!.rowProducts(request), engine, out.rows, phases)
        : // The plan the build chose for this matrix (recorded in its manifest).
          answerIntoWire(matrix, values, answerPlanFor(target.plan, target.contentHash, matrix), engine, out.rows, phases);
    answer = out.body;
    clock.add(phases);
    // Counted before the answer goes out: every answer a client receives is in the usage.
    // Metered in 2048-bit products: a 3072-bit product weighs two (core/pir/params.ts).
    const weighted = multiplications * PRODUCT_WEIGHT[validateModulus(n)];
    await recordAnsweredQuery(db, { credentialId: c.var.credentialId, ...metered, bytesIn: body.length, bytesOut: answer.length, multiplications: weighted }, now);
  } catch (err) {
    await releaseQuotaSlot(db, c.var.credentialId, month).catch((e: unknown) => console.error('nearveil: quota slot not released', e));
    throw err;
  }
  return c.body(answer.buffer as ArrayBuffer, 200, {
    'Content-Type': 'application/octet-stream',
    'Server-Timing': clock.header(target.label),
    'X-Nearveil-Multiplications': String(multiplications),
    'Cache-Control': 'no-store',
  });
}
