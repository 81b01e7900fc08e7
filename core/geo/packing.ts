/**
 * How regions stack into matrix columns: region i goes to column floor(i / regionsPerColumn),
 * rows [(i mod regionsPerColumn) * regionBits, + regionBits). Then R = regionsPerColumn *
 * regionBits and C = ceil(regions / regionsPerColumn).
 */
export interface Packing {
  readonly regionsPerColumn: number;
  readonly rows: number;
  readonly columns: number;
}

export function packing(regions: number, regionBits: number, regionsPerColumn: number): Packing {
  return { regionsPerColumn, rows: regionsPerColumn * regionBits, columns: Math.ceil(regions / regionsPerColumn) };
}

/**
 * The packing with least R + C: a query uploads C values and downloads R values of the modulus
 * size, so this is the bytes both ways. Ties go to fewer regions per column. The one place where
 * a fuller cost model (server work, per-query overheads) will go.
 */
export function choosePacking(regions: number, regionBits: number): Packing {
  if (!Number.isSafeInteger(regions) || regions < 1) throw new RangeError(`choosePacking: expected regions >= 1, got ${regions}`);
  if (!Number.isSafeInteger(regionBits) || regionBits < 1) {
    throw new RangeError(`choosePacking: expected regionBits >= 1, got ${regionBits}`);
  }
  let best = packing(regions, regionBits, 1);
  for (let k = 2; k <= regions; k++) {
    const p = packing(regions, regionBits, k);
    if (p.rows + p.columns < best.rows + best.columns) best = p;
  }
  return best;
}
