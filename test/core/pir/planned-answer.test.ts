import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { beforeAll, describe, expect, it } from 'vitest';
import { randomBelow } from '../../../core/bigint/random.ts';
import { createBitMatrix, readColumn, setBit, type BitMatrix } from '../../../core/matrix/bit-matrix.ts';
import { choosePlan, planProducts, type AnswerPlan } from '../../../core/pir/answer-plan.ts';
import { decodeRows } from '../../../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { answerWithPlan, unblindedRowProducts } from '../../../core/pir/planned-answer.ts';
import { mineMatrix } from '../../../core/pir/mined-plan.ts';
import { createBigIntEngine } from '../../../core/pir/product-engine.ts';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { randomMatrix } from './random-matrix.ts';
import { makeQuery } from '../../../core/pir/query.ts';

/** Reference: the row product by jsbn (npm jsbn 1.1.0), one multiply-and-mod per 1-bit. */
function jsbnRowProducts(m: BitMatrix, values: readonly bigint[], n: bigint): bigint[] {
  const N = new BigInteger(n.toString(16), 16);
  const ys = values.map((v) => new BigInteger(v.toString(16), 16));
  const out: bigint[] = [];
  for (let r = 0; r < m.rows; r++) {
    let acc = BigInteger.ONE;
    for (let c = 0; c < m.columns; c++) if ((m.words[r * m.wordsPerRow + (c >>> 5)]! >>> (c & 31)) & 1) acc = acc.multiply(ys[c]!).mod(N);
    out.push(BigInt('0x' + acc.toString(16)));
  }
  return out;
}

const FIXED_PLANS: AnswerPlan[] = [{ kind: 'plain' }, ...[1, 2, 3, 5, 8, 11].map((b) => ({ kind: 'blocked', blockColumns: b }) as const)];
const plansFor = (m: BitMatrix): AnswerPlan[] => [...FIXED_PLANS, { kind: 'mined', mined: mineMatrix(m) }];

describe('answer plans', () => {
  let key: PirKeyPair;
  let kernelModule: WebAssembly.Module;
  beforeAll(async () => {
    key = await generateKeyPair({ modulusBits: 2048 });
    kernelModule = await loadKernelModuleNode(2048);
  });

  it('every plan on the SIMD Montgomery kernel gives jsbn\'s row products', () => {
    for (const [rows, cols, density] of [[17, 29, 0.45], [40, 9, 0.9], [5, 70, 0.05]] as const) {
      const m = randomMatrix(rows, cols, density, rows * cols);
      const values = Array.from({ length: cols }, () => randomBelow(key.n - 1n) + 1n);
      const reference = jsbnRowProducts(m, values, key.n);
      for (const plan of plansFor(m)) {
        const { rows: got, products } = unblindedRowProducts(m, values, plan, createMontgomeryKernel(kernelModule, key.n));
        expect(got).toEqual(reference);
        expect(products + 2 * rows).toBe(planProducts(m, plan));
      }
    }
  });

  it('every plan gives jsbn\'s row products and does exactly the products planProducts counts', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 30 }), fc.integer({ min: 1, max: 40 }), fc.double({ min: 0, max: 1, noNaN: true }), fc.nat(), (rows, cols, density, seed) => {
        const m = randomMatrix(rows, cols, density, seed);
        const values = Array.from({ length: cols }, () => randomBelow(key.n - 1n) + 1n);
        const reference = jsbnRowProducts(m, values, key.n);
        for (const plan of plansFor(m)) {
          const { rows: got, products } = unblindedRowProducts(m, values, plan, createBigIntEngine(key.n));
          expect(got).toEqual(reference);
          expect(products + 2 * rows).toBe(planProducts(m, plan));
        }
      }),
      { numRuns: 25, seed: 20261203 },
    );
  });

  it('a blinded answer by any plan decodes to the queried column', () => {
    const m = randomMatrix(24, 37, 0.45, 7);
    const mined = mineMatrix(m);
    expect(mined.rules.length).toBeGreaterThan(0);
    for (const plan of plansFor(m)) {
      for (const column of [0, 18, 36]) {
        const { rows, products } = answerWithPlan(m, makeQuery(key, m.columns, column), plan, createBigIntEngine(key.n));
        expect(Array.from(decodeRows(key, rows))).toEqual(Array.from(readColumn(m, column)));
        expect(products).toBe(planProducts(m, plan));
      }
    }
  });

  it('mined rules pay off on rows that share column sets', () => {
    // 60 rows drawn from 4 shared column patterns: every pattern is one rule chain, reused.
    const patterns = [0, 1, 2, 3].map((p) => randomMatrix(1, 64, 0.5, 100 + p));
    const m = createBitMatrix(60, 64);
    for (let r = 0; r < 60; r++) for (let c = 0; c < 64; c++) if ((patterns[r % 4]!.words[c >>> 5]! >>> (c & 31)) & 1) setBit(m, r, c, 1);
    const choice = choosePlan(m);
    expect(choice.plan.kind).toBe('mined');
    expect(choice.products).toBeLessThan(planProducts(m, { kind: 'plain' }) / 4);
  });

  it('chooses blocks for a dense random matrix and plain for a very sparse one', () => {
    const dense = choosePlan(randomMatrix(300, 300, 0.45, 1));
    expect(dense.plan).toMatchObject({ kind: 'blocked' });
    expect(dense.products).toBeLessThan(planProducts(randomMatrix(300, 300, 0.45, 1), { kind: 'plain' }) / 2);
    expect(choosePlan(randomMatrix(300, 300, 0.01, 2)).plan).toEqual({ kind: 'plain' });
  });
});
