import { createBitMatrix, type BitMatrix } from './bit-matrix.ts';

/** Columns [from, to) of m as a matrix of their own (a part of a fanned-out answer). */
export function sliceColumns(m: BitMatrix, from: number, to: number): BitMatrix {
  if (!Number.isSafeInteger(from) || !Number.isSafeInteger(to) || from < 0 || to <= from || to > m.columns) {
    throw new RangeError(`sliceColumns: expected 0 <= from < to <= ${m.columns}, got ${from}, ${to}`);
  }
  const out = createBitMatrix(m.rows, to - from);
  for (let r = 0; r < m.rows; r++) {
    const src = r * m.wordsPerRow;
    const dst = r * out.wordsPerRow;
    for (let c = from; c < to; c++) {
      if ((m.words[src + (c >>> 5)]! >>> (c & 31)) & 1) {
        const k = c - from;
        out.words[dst + (k >>> 5)] = out.words[dst + (k >>> 5)]! | (1 << (k & 31));
      }
    }
  }
  return out;
}
