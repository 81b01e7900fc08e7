import { InputError } from '../errors/input-error.ts';
import type { BitMatrix } from './bit-matrix.ts';

/**
 * Stored form of a cell matrix (the blob a build writes to object storage):
 *   bytes 0-3   ASCII "NVM1" (format and version)
 *   bytes 4-7   rows, unsigned 32-bit big-endian
 *   bytes 8-11  columns, unsigned 32-bit big-endian
 *   then rows * ceil(columns / 32) words, each unsigned 32-bit big-endian, layout as BitMatrix.
 */
const MAGIC = [0x4e, 0x56, 0x4d, 0x31];
const HEADER_BYTES = 12;

export function encodeMatrixBlob(m: BitMatrix): Uint8Array<ArrayBuffer> {
  const out = new Uint8Array(HEADER_BYTES + m.words.length * 4);
  const view = new DataView(out.buffer);
  out.set(MAGIC, 0);
  view.setUint32(4, m.rows);
  view.setUint32(8, m.columns);
  for (let i = 0; i < m.words.length; i++) view.setUint32(HEADER_BYTES + i * 4, m.words[i]!);
  return out;
}

export function decodeMatrixBlob(bytes: Uint8Array): BitMatrix {
  if (bytes.length < HEADER_BYTES || MAGIC.some((b, i) => bytes[i] !== b)) {
    throw new InputError('matrix_format', 'matrix', 'matrix blob: expected header "NVM1"');
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const rows = view.getUint32(4);
  const columns = view.getUint32(8);
  const wordsPerRow = Math.ceil(columns / 32);
  const expected = HEADER_BYTES + rows * wordsPerRow * 4;
  if (rows < 1 || columns < 1 || bytes.length !== expected) {
    throw new InputError('matrix_format', 'matrix', `matrix blob: expected ${expected} bytes, got ${bytes.length}`);
  }
  const words = new Uint32Array(rows * wordsPerRow);
  for (let i = 0; i < words.length; i++) words[i] = view.getUint32(HEADER_BYTES + i * 4);
  return { rows, columns, wordsPerRow, words };
}
