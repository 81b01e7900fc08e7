import { describe, expect, it } from 'vitest';
import { countOnes, createBitMatrix, getBit, readColumn, setBit } from '../../core/matrix/bit-matrix.ts';
import { decodeMatrixBlob, encodeMatrixBlob } from '../../core/matrix/matrix-blob.ts';

describe('bit matrix', () => {
  it('stores bits at the documented positions and survives its stored form', () => {
    const m = createBitMatrix(3, 70);
    setBit(m, 0, 0, 1);
    setBit(m, 1, 33, 1);
    setBit(m, 2, 69, 1);
    expect(m.words[0]).toBe(1);
    expect(m.words[3 + 1]).toBe(2);
    expect(countOnes(m)).toBe(3);
    const back = decodeMatrixBlob(encodeMatrixBlob(m));
    expect(back.rows).toBe(3);
    expect(back.columns).toBe(70);
    expect(Array.from(readColumn(back, 33))).toEqual([0, 1, 0]);
    expect(getBit(back, 2, 69)).toBe(1);
    setBit(back, 2, 69, 0);
    expect(countOnes(back)).toBe(2);
  });

  it('refuses a truncated blob', () => {
    const blob = encodeMatrixBlob(createBitMatrix(2, 40));
    expect(() => decodeMatrixBlob(blob.subarray(0, blob.length - 1))).toThrow(/expected 28 bytes/);
  });
});
