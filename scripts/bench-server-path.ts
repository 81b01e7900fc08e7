// `npm run bench`, the whole server path of one query, phase by phase, as api/query/answer-column.ts
// runs it (decode, checks, values into the kernel, the plan's products, blinding, rows out into
// the answer body), next to the same query answered the plain way (BigInt values, one Jacobi
// symbol per value, one BigInt product per 1-bit) and to products x the kernel's ns per product.
import type { BitMatrix } from '../core/matrix/bit-matrix.ts';
import { createMontgomeryKernel, type KernelInstance } from '../core/montgomery/kernel.ts';
import type { AnswerPlan } from '../core/pir/answer-plan.ts';
import { answerQuery } from '../core/pir/answer.ts';
import { valuesHaveJacobiOne } from '../core/pir/jacobi-batch.ts';
import type { PirKeyPair } from '../core/pir/keys.ts';
import { answerIntoWire, noPhases } from '../core/pir/planned-answer.ts';
import { makeQuery } from '../core/pir/query.ts';
import { validateQuery, validateQueryRanges } from '../core/pir/validate.ts';
import { answerBody, decodeQuery, decodeQueryWire, encodeAnswer, encodeQuery } from '../core/pir/wire.ts';

export interface ServerPathTimes {
  decode: number;
  check: number;
  in: number;
  products: number;
  blinding: number;
  out: number;
  total: number;
  productCount: number;
}

/**
 * One query through the server path on the kernel, every phase timed (ms). `instance` is a warm
 * kernel instance, as the Worker keeps one between queries (api/query/product-engine.ts).
 */
export function serverPath(instance: KernelInstance, matrix: BitMatrix, plan: AnswerPlan, body: Uint8Array): ServerPathTimes {
  const t0 = performance.now();
  const { n, values } = decodeQueryWire(body);
  const t1 = performance.now();
  validateQueryRanges(n, values, matrix.columns);
  const engine = createMontgomeryKernel(instance, n);
  if (!valuesHaveJacobiOne(values, engine, 0)) throw new Error('bench: an honest query failed the check');
  const t2 = performance.now();
  const out = answerBody(256, matrix.rows);
  const phases = noPhases();
  const productCount = answerIntoWire(matrix, values, plan, engine, out.rows, phases);
  const t3 = performance.now();
  return { decode: t1 - t0, check: t2 - t1, ...phases, total: t3 - t0, productCount };
}

/** The plain way, for the same body: BigInt values, one Jacobi symbol each, one BigInt product per 1-bit. */
export function plainPath(matrix: BitMatrix, body: Uint8Array): { decode: number; check: number; answer: number; encode: number; total: number } {
  const t0 = performance.now();
  const { n, values } = decodeQuery(body);
  const t1 = performance.now();
  validateQuery(n, values, matrix.columns);
  const t2 = performance.now();
  const rows = answerQuery(matrix, n, values);
  const t3 = performance.now();
  encodeAnswer(256, rows);
  const t4 = performance.now();
  return { decode: t1 - t0, check: t2 - t1, answer: t3 - t2, encode: t4 - t3, total: t4 - t0 };
}

/** The checks alone, the old way (BigInt decode and a Jacobi symbol per value), for comparison. */
export function plainChecks(matrix: BitMatrix, body: Uint8Array): number {
  const t0 = performance.now();
  const { n, values } = decodeQuery(body);
  validateQuery(n, values, matrix.columns);
  return performance.now() - t0;
}

/** A query body for column 0 of a matrix with C columns. */
export const queryBody = (key: PirKeyPair, columns: number) => encodeQuery(key.n, makeQuery(key, columns, 0));

const fixed = (x: number, d = 0) => x.toFixed(d).padStart(7);

export function formatServerPath(label: string, t: ServerPathTimes, kernelNs: number, oldChecksMs: number, plainMs: number, plainEstimated: boolean): string {
  const productsOnly = (t.productCount * kernelNs) / 1e6;
  return (
    `${label.padEnd(26)} ${fixed(t.decode, 1)} ${fixed(t.check, 1)} ${fixed(oldChecksMs)} ${fixed(t.in, 1)} ${fixed(t.products)} ${fixed(t.blinding, 1)} ${fixed(t.out, 1)} ${fixed(t.total)}` +
    `  ${(t.total / productsOnly).toFixed(2).padStart(6)}  ${fixed(plainMs)}${plainEstimated ? '*' : ' '} ${(plainMs / t.total).toFixed(1).padStart(6)}x`
  );
}

export const SERVER_PATH_HEADER =
  'dataset                     decode   check  (old)      in products  blind     out   total  /prod  plain ms  ratio';
