import { describe, expect, it } from 'vitest';
import { createBitMatrix, readColumn, setBit } from '../../../core/matrix/bit-matrix.ts';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { decodeRows } from '../../../core/pir/decode.ts';
import { generateKeyPair } from '../../../core/pir/keys.ts';
import { BLINDING_CHUNK, answerWithPlan, combineParts, unblindedRowProducts } from '../../../core/pir/planned-answer.ts';
import { createBigIntEngine } from '../../../core/pir/product-engine.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';

describe('blinding in chunks of rows', () => {
  it('decodes every row of a matrix taller than two chunks, single answer and combined parts', async () => {
    const rows = 2 * BLINDING_CHUNK + 37;
    const m = createBitMatrix(rows, 5);
    for (let r = 0; r < rows; r++) for (let c = 0; c < 5; c++) if ((r * 7 + c * 3) % 5 < 2) setBit(m, r, c, 1);
    const key = await generateKeyPair({ modulusBits: 2048 });
    const values = makeQuery(key, 5, 3);
    const kernel = createMontgomeryKernel(await loadKernelModuleNode(2048), key.n);
    const single = answerWithPlan(m, values, { kind: 'blocked', blockColumns: 2 }, kernel);
    expect(Array.from(decodeRows(key, single.rows))).toEqual(Array.from(readColumn(m, 3)));
    // Every row blinded: two products per row on top of the row products.
    const unblinded = unblindedRowProducts(m, values, { kind: 'blocked', blockColumns: 2 }, createBigIntEngine(key.n));
    expect(single.products - unblinded.products).toBe(2 * rows);
    // No row left unblinded: an unblinded row equals its plain product, a blinded one almost never does.
    expect(single.rows.filter((z, r) => z === unblinded.rows[r]).length).toBe(0);
    const combined = combineParts([unblinded.rows, Array.from({ length: rows }, () => 1n)], createBigIntEngine(key.n));
    expect(Array.from(decodeRows(key, combined.rows))).toEqual(Array.from(readColumn(m, 3)));
  });
});
