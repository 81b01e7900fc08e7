import { beforeAll, describe, expect, it } from 'vitest';
import { readColumn } from '../../../core/matrix/bit-matrix.ts';
import { answerQuery } from '../../../core/pir/answer.ts';
import { decodeRows, rowReader } from '../../../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { decodeAnswerWire, encodeAnswer } from '../../../core/pir/wire.ts';
import { eulerSymbol, seededBytes } from './residuosity-reference.ts';
import { randomMatrix } from './random-matrix.ts';

// Which values are bad comes from Euler's criterion in jsbn (residuosity-reference.ts), and the
// random subsets from a seeded source.
const euler = eulerSymbol;

let key: PirKeyPair;
let residueModPOnly: bigint; // symbols (+1, -1) modulo (p, q): Jacobi -1, decodes as a 0 modulo p
beforeAll(async () => {
  key = await generateKeyPair({ modulusBits: 2048 });
  for (let x = 1_000_003n; ; x++) {
    if (euler(x, key.p) === 1 && euler(x, key.q) === -1) {
      residueModPOnly = x;
      break;
    }
  }
});

describe('rowReader', () => {
  it('decodes the rows asked for, each once, as the matrix holds them (BigInt rows and wire bytes)', () => {
    const m = randomMatrix(40, 9, 0.5, 11);
    const rows = answerQuery(m, key.n, makeQuery(key, 9, 4));
    const column = Array.from(readColumn(m, 4));
    for (const answer of [rows, decodeAnswerWire(encodeAnswer(256, rows))]) {
      const reader = rowReader(key, answer, seededBytes(1));
      for (const r of [3, 17, 3, 39, 0]) expect(reader.bit(r), `row ${r}`).toBe(column[r]);
      expect(reader.rowsRead).toBe(4);
      expect(() => reader.check()).not.toThrow();
      expect(() => reader.bit(40)).toThrow(/expected a row in \[0, 40\), got 40/);
    }
  });

  it('refuses one row of Jacobi symbol -1 at any position, over many seeded subset draws, naming it', () => {
    const m = randomMatrix(24, 5, 0.5, 12);
    const honest = answerQuery(m, key.n, makeQuery(key, 5, 2));
    for (let at = 0; at < 24; at++) {
      // The bad row decodes as 0 (a residue modulo p), so only the check modulo q can see it.
      const tampered = honest.map((z, r) => (r === at ? residueModPOnly : z));
      for (let seed = 0; seed < 4; seed++) {
        expect(() => decodeRows(key, tampered, 0, 24, seededBytes(100 * at + seed)), `row ${at}, seed ${seed}`).toThrow(new RegExp(`expected row ${at} to have Jacobi symbol \\+1`));
      }
    }
  });

  it('refuses a row that shares the factor q with n', () => {
    const honest = answerQuery(randomMatrix(6, 3, 0.5, 13), key.n, makeQuery(key, 3, 0));
    const tampered = honest.map((z, r) => (r === 5 ? key.q * 3n : z));
    expect(() => decodeRows(key, tampered, 0, 6, seededBytes(2))).toThrow(/expected row 5 to have Jacobi symbol \+1 and no common factor with n, got \(\S+, 0\)/);
  });

  it('can fail: with no subset drawn (a broken random source) the tampered row goes unseen', () => {
    const honest = answerQuery(randomMatrix(8, 3, 0.5, 14), key.n, makeQuery(key, 3, 1));
    const tampered = honest.map((z, r) => (r === 3 ? residueModPOnly : z));
    expect(() => decodeRows(key, tampered, 0, 8, (bytes) => bytes.fill(0))).not.toThrow();
  });
});
