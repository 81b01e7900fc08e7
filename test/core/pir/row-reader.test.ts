import { BigInteger } from 'jsbn';
import { beforeAll, describe, expect, it } from 'vitest';
import { readColumn } from '../../../core/matrix/bit-matrix.ts';
import { answerQuery } from '../../../core/pir/answer.ts';
import { decodeRows, rowReader } from '../../../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { decodeAnswerWire, encodeAnswer } from '../../../core/pir/wire.ts';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';
import { randomMatrix } from './random-matrix.ts';

// Residuosity of crafted rows comes from Euler's criterion computed by jsbn (common practice:
// a^((p-1)/2) is 1 for a residue and p - 1 for a non-residue modulo an odd prime p).
const big = (x: bigint) => new BigInteger(x.toString(16), 16);
const euler = (a: bigint, p: bigint): 1 | -1 | 0 => {
  const v = BigInt('0x' + big(a % p).modPow(big((p - 1n) / 2n), big(p)).toString(16));
  return v === 1n ? 1 : v === 0n ? 0 : -1;
};
/** A seeded stand-in for the client's random source. */
const seededBytes = (seed: number) => {
  const next = seededRandom(seed);
  return (bytes: Uint8Array) => {
    for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor(next() * 256);
  };
};

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
