import { COST_MODEL, shapeCost } from '../build/cost-model.ts';
import { createBitMatrix, type BitMatrix } from '../matrix/bit-matrix.ts';
import { MAX_BLOCK_COLUMNS, tableProducts } from '../pir/answer-plan.ts';
import { RECORD_KEY_BYTES } from './seal.ts';

/**
 * The details matrix: the record keys, keyed by site index. Site i's key sits in column
 * floor(i / keysPerColumn), rows (i mod keysPerColumn) * 128 up to that plus 128, its bytes in
 * order, each byte most significant bit first. A details query asks for one column, so it
 * discloses to the client the keys of at most keysPerColumn sites.
 */
export const KEY_BITS = RECORD_KEY_BYTES * 8;
/** Choices for keysPerColumn; 16 bounds what one details query discloses. */
export const KEYS_PER_COLUMN_CHOICES = [1, 2, 4, 8, 16] as const;

export interface KeyLocation {
  column: number;
  rowStart: number;
  rowCount: number;
}

export function keyLocation(index: number, keysPerColumn: number): KeyLocation {
  return { column: Math.floor(index / keysPerColumn), rowStart: (index % keysPerColumn) * KEY_BITS, rowCount: KEY_BITS };
}

/** The details matrix: `keys` holds every site's record key, RECORD_KEY_BYTES each, one after another. */
export function fillKeyMatrix(keys: Uint8Array, keysPerColumn: number): BitMatrix {
  const count = keys.length / RECORD_KEY_BYTES;
  if (!Number.isInteger(count) || count < 1) throw new RangeError(`fillKeyMatrix: expected whole keys of ${RECORD_KEY_BYTES} bytes, got ${keys.length} bytes`);
  const m = createBitMatrix(keysPerColumn * KEY_BITS, Math.ceil(count / keysPerColumn));
  for (let i = 0; i < count; i++) {
    const { column, rowStart } = keyLocation(i, keysPerColumn);
    const word = column >>> 5;
    const mask = 1 << (column & 31);
    const at = i * RECORD_KEY_BYTES;
    for (let b = 0; b < KEY_BITS; b++) {
      if ((keys[at + (b >>> 3)]! >>> (7 - (b & 7))) & 1) m.words[(rowStart + b) * m.wordsPerRow + word]! |= mask;
    }
  }
  return m;
}

/** A key back from its 128 decoded bits (0/1 bytes, most significant first). */
export function keyFromBits(bits: Uint8Array): Uint8Array<ArrayBuffer> {
  if (!(bits instanceof Uint8Array) || bits.length !== KEY_BITS) throw new RangeError(`keyFromBits: expected ${KEY_BITS} bits, got ${bits?.length}`);
  const key = new Uint8Array(RECORD_KEY_BYTES);
  for (let b = 0; b < KEY_BITS; b++) if (bits[b]) key[b >>> 3]! |= 0x80 >>> (b & 7);
  return key;
}

/**
 * Products of the best blocked plan on a keysPerColumn shape, assuming every block of every row
 * holds a 1 (keys are pseudorandom: a block of b bits is all zero with probability 2^-b).
 */
export function estimatedKeyProducts(sites: number, keysPerColumn: number): number {
  const rows = keysPerColumn * KEY_BITS;
  const columns = Math.ceil(sites / keysPerColumn);
  let best = rows * Math.max(0, Math.ceil(columns / 2) - 1) + 2 * rows; // plain: half the bits are ones
  for (let b = 2; b <= Math.min(MAX_BLOCK_COLUMNS, columns); b++) {
    const blocks = Math.ceil(columns / b);
    best = Math.min(best, blocks * tableProducts(b) + rows * (blocks - 1) + 2 * rows);
  }
  return best;
}

/** keysPerColumn with the least modelled cost per details query (core/build/cost-model.ts). */
export function chooseKeysPerColumn(sites: number, model = COST_MODEL): number {
  let best = 1;
  let bestSeconds = Infinity;
  for (const g of KEYS_PER_COLUMN_CHOICES) {
    if (g > 1 && g > sites) break; // more keys per column than sites only wastes rows
    const cost = shapeCost(g * KEY_BITS, Math.ceil(sites / g), estimatedKeyProducts(sites, g), KEY_BITS, model);
    if (cost.seconds.total < bestSeconds) {
      best = g;
      bestSeconds = cost.seconds.total;
    }
  }
  return best;
}
