/**
 * A dense bit matrix, row-major. Each row is padded to whole 32-bit words so a row can be
 * scanned word by word. Bit (r, c) lives in word r * wordsPerRow + (c >>> 5), at bit (c & 31)
 * counted from the least significant end.
 */
export interface BitMatrix {
  readonly rows: number;
  readonly columns: number;
  readonly wordsPerRow: number;
  readonly words: Uint32Array;
}

export function createBitMatrix(rows: number, columns: number): BitMatrix {
  if (!Number.isSafeInteger(rows) || rows < 1) throw new RangeError(`createBitMatrix: expected rows >= 1, got ${rows}`);
  if (!Number.isSafeInteger(columns) || columns < 1) {
    throw new RangeError(`createBitMatrix: expected columns >= 1, got ${columns}`);
  }
  const wordsPerRow = Math.ceil(columns / 32);
  return { rows, columns, wordsPerRow, words: new Uint32Array(rows * wordsPerRow) };
}

export function getBit(m: BitMatrix, row: number, column: number): 0 | 1 {
  const word = m.words[row * m.wordsPerRow + (column >>> 5)]!;
  return ((word >>> (column & 31)) & 1) as 0 | 1;
}

export function setBit(m: BitMatrix, row: number, column: number, bit: 0 | 1): void {
  const i = row * m.wordsPerRow + (column >>> 5);
  const mask = 1 << (column & 31);
  m.words[i] = bit ? m.words[i]! | mask : m.words[i]! & ~mask;
}

/** The bits of one column, top to bottom, as 0/1 bytes (what one query retrieves). */
export function readColumn(m: BitMatrix, column: number): Uint8Array {
  const out = new Uint8Array(m.rows);
  for (let r = 0; r < m.rows; r++) out[r] = getBit(m, r, column);
  return out;
}

/** Number of 1-bits: the plain answer's multiplication count. */
export function countOnes(m: BitMatrix): number {
  let total = 0;
  for (const word of m.words) {
    let w = word;
    while (w !== 0) {
      w &= w - 1;
      total++;
    }
  }
  return total;
}
