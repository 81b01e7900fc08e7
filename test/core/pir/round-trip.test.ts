import { BigInteger } from 'jsbn';
import { beforeAll, describe, expect, it } from 'vitest';
import { jacobi } from '../../../core/bigint/jacobi.ts';
import { createBitMatrix, getBit, readColumn, setBit } from '../../../core/matrix/bit-matrix.ts';
import { answerMultiplications, answerQuery } from '../../../core/pir/answer.ts';
import { decodeRows } from '../../../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { validateQuery } from '../../../core/pir/validate.ts';
import { answerByteLength, decodeAnswer, decodeQuery, encodeAnswer, encodeQuery, queryByteLength } from '../../../core/pir/wire.ts';
import { randomMatrix } from './random-matrix.ts';

// The reference for every decoded bit is the matrix itself (readColumn); residuosity of query
// values is checked with Euler's criterion computed by jsbn. Test matrices come from the seeded
// randomMatrix (random-matrix.ts); each check names its seed in its failure message.
let key: PirKeyPair;
beforeAll(async () => {
  key = await generateKeyPair({ modulusBits: 2048 });
});

const big = (x: bigint) => new BigInteger(x.toString(16), 16);
const euler = (a: bigint, p: bigint) => BigInt('0x' + big(a).modPow(big((p - 1n) / 2n), big(p)).toString(16));

describe('query', () => {
  it('hides the column in a non-residue with Jacobi +1 and draws fresh values', () => {
    const values = makeQuery(key, 6, 4);
    values.forEach((y, j) => {
      expect(jacobi(y, key.n)).toBe(1);
      // Euler's criterion is p-1 for a non-residue and 1 for a residue (common practice).
      expect(euler(y, key.p), `Euler mod p, value ${j}`).toBe(j === 4 ? key.p - 1n : 1n);
      expect(euler(y, key.q), `Euler mod q, value ${j}`).toBe(j === 4 ? key.q - 1n : 1n);
    });
    const again = makeQuery(key, 6, 4);
    again.forEach((y, j) => expect(y).not.toBe(values[j]));
  });

  it('checks its arguments', () => {
    expect(() => makeQuery(key, 0, 0)).toThrow(/expected integer columns >= 1, got 0/);
    expect(() => makeQuery(key, 5, 5)).toThrow(/expected column in \[0, 5\), got 5/);
    expect(() => makeQuery(key, 5, -1)).toThrow(RangeError);
  });
});

describe('query, answer, decode', () => {
  const shapes: Array<[rows: number, columns: number, density: number, seed: number]> = [
    [1, 1, 0.5, 101], [1, 1, 1, 102], [1, 9, 0.5, 103], [9, 1, 0.5, 104], [7, 33, 0.5, 105], [13, 31, 0, 106], [5, 17, 1, 107], [30, 50, 0.5, 108], [3, 65, 0.2, 109],
  ];
  it.each(shapes)('recovers every column of a %i x %i matrix (density %f, matrix seed %i)', (rows, columns, density, seed) => {
    const m = randomMatrix(rows, columns, density, seed);
    for (let c = 0; c < columns; c++) {
      const query = makeQuery(key, columns, c);
      validateQuery(key.n, query, columns);
      const answer = answerQuery(m, key.n, query);
      expect(answer).toHaveLength(rows);
      expect(Array.from(decodeRows(key, answer)), `column ${c}, matrix seed ${seed}`).toEqual(Array.from(readColumn(m, c)));
    }
  });

  it('forces both bit values into the tested column (a matrix that is all 0 or all 1 could hide a bug)', () => {
    const m = createBitMatrix(4, 3);
    setBit(m, 1, 2, 1);
    setBit(m, 3, 2, 1);
    setBit(m, 0, 0, 1);
    const answer = answerQuery(m, key.n, makeQuery(key, 3, 2));
    expect(Array.from(decodeRows(key, answer))).toEqual([0, 1, 0, 1]);
  });

  it('decodes only the asked rows', () => {
    const m = randomMatrix(20, 8, 0.5, 201);
    const answer = answerQuery(m, key.n, makeQuery(key, 8, 3));
    const column = Array.from(readColumn(m, 3));
    expect(Array.from(decodeRows(key, answer, 5, 12)), 'matrix seed 201').toEqual(column.slice(5, 12));
    expect(decodeRows(key, answer, 7, 7)).toHaveLength(0);
    expect(() => decodeRows(key, answer, 5, 21)).toThrow(/expected 0 <= from <= to <= 20, got from=5, to=21/);
    expect(() => decodeRows(key, answer, 6, 5)).toThrow(RangeError);
  });

  it('survives the wire format both ways', () => {
    const m = randomMatrix(11, 23, 0.5, 202);
    for (const c of [0, 7, 22]) {
      const body = encodeQuery(key.n, makeQuery(key, 23, c));
      expect(body.length).toBe(queryByteLength(2048, 23));
      const { n, values } = decodeQuery(body);
      validateQuery(n, values, 23);
      const answerBody = encodeAnswer(256, answerQuery(m, n, values));
      expect(answerBody.length).toBe(answerByteLength(2048, 11));
      const { modulusBytes, rows } = decodeAnswer(answerBody);
      expect(modulusBytes).toBe(256);
      expect(Array.from(decodeRows(key, rows)), `column ${c}, matrix seed 202`).toEqual(Array.from(readColumn(m, c)));
    }
  });
});

describe('blinding', () => {
  it('gives different answers to the same query that decode the same', () => {
    const m = randomMatrix(12, 10, 0.5, 203);
    const query = makeQuery(key, 10, 6);
    const a = answerQuery(m, key.n, query);
    const b = answerQuery(m, key.n, query);
    a.forEach((z, r) => expect(z, `row ${r}`).not.toBe(b[r]));
    expect(Array.from(decodeRows(key, a)), 'matrix seed 203').toEqual(Array.from(decodeRows(key, b)));
    expect(Array.from(decodeRows(key, a)), 'matrix seed 203').toEqual(Array.from(readColumn(m, 6)));
  });

  it('blinds even an all-zero row (no 1-bit to multiply)', () => {
    const m = createBitMatrix(2, 4);
    const query = makeQuery(key, 4, 1);
    const a = answerQuery(m, key.n, query);
    a.forEach((z) => expect(z === 1n).toBe(false));
    expect(Array.from(decodeRows(key, a))).toEqual([0, 0]);
  });
});

describe('answer bookkeeping and checks', () => {
  it('counts one multiplication per 1-bit plus two per row', () => {
    const m = randomMatrix(9, 40, 0.5, 204);
    let ones = 0;
    for (let r = 0; r < 9; r++) for (let c = 0; c < 40; c++) ones += getBit(m, r, c);
    expect(answerMultiplications(m), 'matrix seed 204').toBe(ones + 18);
  });

  it('refuses a value count that does not match the matrix or an even modulus', () => {
    const m = createBitMatrix(2, 4);
    expect(() => answerQuery(m, key.n, makeQuery(key, 3, 0))).toThrow(/expected 4 values, got 3/);
    expect(() => answerQuery(m, key.n + 1n, makeQuery(key, 4, 0))).toThrow(RangeError);
  });

  it('refuses a tampered answer row instead of decoding it', () => {
    const m = randomMatrix(3, 3, 0.5, 205);
    const answer = answerQuery(m, key.n, makeQuery(key, 3, 1));
    let bad = 2n;
    while (jacobi(bad, key.n) !== -1) bad++;
    expect(() => decodeRows(key, [answer[0]!, bad, answer[2]!])).toThrow(/expected row 1 to have Jacobi symbol \+1/);
    expect(() => decodeRows(key, [key.p, answer[1]!])).toThrow(/row 0/);
    expect(() => decodeRows(key, [0n])).toThrow(/expected row 0 in \[1, n\)/);
    expect(() => decodeRows(key, [key.n])).toThrow(RangeError);
  });
});
