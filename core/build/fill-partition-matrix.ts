import type { Packing } from '../geo/packing.ts';
import { writeRecord, type PartitionRecord, type VeiledLayout } from '../geo/veiled-layout.ts';
import { createBitMatrix, setBit, type BitMatrix } from '../matrix/bit-matrix.ts';

/**
 * The partition matrix of a veiled layout: the record of coarse cell i (veiled-layout.ts), padded
 * with zero bits to partitionBits, at column floor(i / cellsPerColumn), rows from
 * (i mod cellsPerColumn) * partitionBits. Throws RangeError when a record is longer than the pad.
 */
export function fillPartitionMatrix(records: readonly PartitionRecord[], layout: VeiledLayout, pack: Packing): BitMatrix {
  const m = createBitMatrix(pack.rows, pack.columns);
  records.forEach((record, cell) => {
    const column = Math.floor(cell / pack.regionsPerColumn);
    const base = (cell % pack.regionsPerColumn) * layout.partitionBits;
    const used = writeRecord((at) => setBit(m, base + at, column, 1), record, layout.offsetBits, layout.splitBits);
    if (used > layout.partitionBits) {
      throw new RangeError(`fillPartitionMatrix: expected at most ${layout.partitionBits} bits, got ${used} in cell ${cell}`);
    }
  });
  return m;
}

/** 1-bits of a record: what it adds to a plain answer's products. */
export function recordOnes(record: PartitionRecord, layout: Pick<VeiledLayout, 'offsetBits' | 'splitBits'>): number {
  let ones = 0;
  writeRecord(() => ones++, record, layout.offsetBits, layout.splitBits);
  return ones;
}
