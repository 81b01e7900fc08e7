import { LAT_BITS, LON_BITS } from './quantise.ts';

/**
 * Slot layout of a candidate list. A region's bits are slotsPerRegion slots of slotBits each;
 * a slot is, most significant bit first: site index + 1 (indexBits), quantised latitude (24 bits),
 * quantised longitude (25 bits). An empty slot is all zeros (stored index 0), so padding adds no
 * 1-bits: the plain answer costs one product per 1-bit, and most slots are padding.
 * indexBits = ceil(log2(siteCount + 1)) leaves room for the shift by one.
 * Filled slots come first, in ascending site index.
 */
export interface RecordLayout {
  readonly indexBits: number;
  readonly latBits: typeof LAT_BITS;
  readonly lonBits: typeof LON_BITS;
  readonly slotBits: number;
  readonly slotsPerRegion: number;
  readonly regionBits: number;
}

export function recordLayout(siteCount: number, slotsPerRegion: number): RecordLayout {
  if (!Number.isSafeInteger(siteCount) || siteCount < 1) {
    throw new RangeError(`recordLayout: expected siteCount >= 1, got ${siteCount}`);
  }
  if (!Number.isSafeInteger(slotsPerRegion) || slotsPerRegion < 1) {
    throw new RangeError(`recordLayout: expected slotsPerRegion >= 1, got ${slotsPerRegion}`);
  }
  const indexBits = Math.ceil(Math.log2(siteCount + 1));
  const slotBits = indexBits + LAT_BITS + LON_BITS;
  return { indexBits, latBits: LAT_BITS, lonBits: LON_BITS, slotBits, slotsPerRegion, regionBits: slotBits * slotsPerRegion };
}

/**
 * Writes `value` (an integer in [0, 2^bits), bits <= 31) MSB first through `put(offset, bit)`;
 * only the 1-bits are written, so the target must start out zero.
 */
export function writeBits(put: (offset: number, bit: 0 | 1) => void, offset: number, bits: number, value: number): void {
  for (let b = 0; b < bits; b++) {
    if ((value >>> (bits - 1 - b)) & 1) put(offset + b, 1);
  }
}

/** Reads an unsigned integer of `bits` bits, MSB first, from 0/1 bytes at `offset`. */
export function readBits(source: Uint8Array, offset: number, bits: number): number {
  let value = 0;
  for (let b = 0; b < bits; b++) value = value * 2 + (source[offset + b]! & 1);
  return value;
}
