import type { BitMatrix } from '../../core/matrix/bit-matrix.ts';
import type { ColumnPart } from '../../core/pir/fan-out.ts';
import { combineParts } from '../../core/pir/planned-answer.ts';
import { decodeAnswer, encodeQuery } from '../../core/pir/wire.ts';
import { ApiError } from '../http/api-error.ts';
import type { PartRequest, PartResult } from './answer-part.ts';
import { productEngine } from './product-engine.ts';

/** Runs one part; in the Worker, an RPC call through the service binding to itself. */
export type PartRunner = (request: PartRequest) => Promise<PartResult>;

/**
 * Answers by parts: splits the columns, runs the parts concurrently, multiplies their row
 * products and blinds. Any part failing (or answering the wrong shape) refuses the whole query
 * with 503: a partial product is never sent, so no wrong answer can reach the client.
 */
export async function answerByParts(
  matrix: BitMatrix,
  matrixKey: string,
  n: bigint,
  values: readonly bigint[],
  parts: readonly ColumnPart[],
  run: PartRunner,
): Promise<{ rows: bigint[]; products: number; parts: number }> {
  let results: PartResult[];
  try {
    results = await Promise.all(parts.map((p) => run({ matrixKey, from: p.from, to: p.to, query: encodeQuery(n, values.slice(p.from, p.to)) })));
  } catch (err) {
    console.error('nearveil: answer part failed', err);
    throw new ApiError(503, 'part_failed', 'one part of the answer failed; nothing was answered, try again', 'body');
  }
  let partRows: bigint[][];
  try {
    partRows = results.map((r) => decodeAnswer(r.rows).rows);
  } catch (err) {
    console.error('nearveil: answer part sent a malformed body', err);
    partRows = [];
  }
  if (partRows.length !== parts.length || partRows.some((rows) => rows.length !== matrix.rows)) {
    throw new ApiError(503, 'part_failed', 'a part of the answer came back with the wrong number of rows; nothing was answered', 'body');
  }
  const combined = combineParts(partRows, productEngine(n));
  const products = results.reduce((sum, r) => sum + r.products, combined.products);
  return { rows: combined.rows, products, parts: parts.length };
}

