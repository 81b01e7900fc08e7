import type { BitMatrix } from '../../core/matrix/bit-matrix.ts';
import type { ColumnPart } from '../../core/pir/fan-out.ts';
import { combineParts, type AnswerPhases } from '../../core/pir/planned-answer.ts';
import type { ProductEngine } from '../../core/pir/product-engine.ts';
import { decodeAnswerWire, queryBodyOf, sliceWireNumbers, type WireNumbers } from '../../core/pir/wire.ts';
import { ApiError } from '../http/api-error.ts';
import type { PartRequest, PartResult } from './part-messages.ts';

/** Runs one part; in the Worker, an RPC call through the service binding to itself. */
export type PartRunner = (request: PartRequest) => Promise<PartResult>;

/**
 * Answers by parts: splits the columns, runs the parts concurrently, multiplies their row
 * products and blinds on `engine`, writing the rows into `out`. Returns the products of all
 * parts and of the combining. Any part failing (or answering the wrong shape) refuses the whole
 * query with 503: a partial product is never sent, so no wrong answer can reach the client.
 */
export async function answerByParts(
  matrix: BitMatrix,
  matrixKey: string,
  n: bigint,
  values: WireNumbers,
  parts: readonly ColumnPart[],
  run: PartRunner,
  engine: ProductEngine,
  out: WireNumbers,
  phases: AnswerPhases,
): Promise<number> {
  let results: PartResult[];
  try {
    results = await Promise.all(parts.map((p) => run({ matrixKey, from: p.from, to: p.to, query: queryBodyOf(n, sliceWireNumbers(values, p.from, p.to)) })));
  } catch (err) {
    console.error('nearveil: answer part failed', err);
    throw new ApiError(503, 'part_failed', 'one part of the answer failed; nothing was answered, try again', 'body');
  }
  let partRows: WireNumbers[];
  try {
    partRows = results.map((r) => decodeAnswerWire(r.rows));
  } catch (err) {
    console.error('nearveil: answer part sent a malformed body', err);
    partRows = [];
  }
  if (partRows.length !== parts.length || partRows.some((rows) => rows.count !== matrix.rows || rows.width !== out.width)) {
    throw new ApiError(503, 'part_failed', 'a part of the answer came back with the wrong number of rows; nothing was answered', 'body');
  }
  const combined = combineParts(partRows, engine, out, phases);
  return results.reduce((sum, r) => sum + r.products, combined.products);
}
