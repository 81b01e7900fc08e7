import { createBitMatrix, setBit, type BitMatrix } from '../matrix/bit-matrix.ts';
import type { Packing } from '../geo/packing.ts';
import { writeBits, type RecordLayout } from '../geo/record.ts';

/**
 * The cell matrix of a build: region i's list, padded with empty slots to slotsPerRegion, written
 * at column floor(i / regionsPerColumn), rows from (i mod regionsPerColumn) * regionBits (see
 * packing.ts and record.ts). `codes[2s]` and `codes[2s + 1]` are site s's quantised lat and lon.
 */
export function fillMatrix(
  lists: readonly Int32Array[],
  codes: Int32Array,
  record: RecordLayout,
  pack: Packing,
): BitMatrix {
  const m = createBitMatrix(pack.rows, pack.columns);
  lists.forEach((list, region) => {
    if (list.length > record.slotsPerRegion) {
      throw new RangeError(`fillMatrix: expected at most ${record.slotsPerRegion} candidates, got ${list.length} in region ${region}`);
    }
    const column = Math.floor(region / pack.regionsPerColumn);
    const base = (region % pack.regionsPerColumn) * record.regionBits;
    const put = (offset: number, bit: 0 | 1) => setBit(m, base + offset, column, bit);
    for (let slot = 0; slot < record.slotsPerRegion; slot++) {
      const at = slot * record.slotBits;
      const site = list[slot];
      if (site === undefined) continue; // empty slots stay all zeros
      const lat = codes[2 * site]!;
      const lon = codes[2 * site + 1]!;
      writeBits(put, at, record.indexBits, site + 1);
      writeBits(put, at + record.indexBits, record.latBits, lat);
      writeBits(put, at + record.indexBits + record.latBits, record.lonBits, lon);
    }
  });
  return m;
}
