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
 * The packing with the least `cost` (by default R + C: a query uploads C values and downloads
 * R values of the modulus size, so this is the bytes both ways). Ties go to fewer regions per
 * column. Stacking regions does not change the matrix's 1-bits, so server work hardly moves.
 */
export function choosePacking(regions: number, regionBits: number, cost: (p: Packing) => number = (p) => p.rows + p.columns): Packing {
  if (!Number.isSafeInteger(regions) || regions < 1) throw new RangeError(`choosePacking: expected regions >= 1, got ${regions}`);
  if (!Number.isSafeInteger(regionBits) || regionBits < 1) {
    throw new RangeError(`choosePacking: expected regionBits >= 1, got ${regionBits}`);
  }
  let best = packing(regions, regionBits, 1);
  let bestCost = cost(best);
  for (let k = 2; k <= regions; k++) {
    const p = packing(regions, regionBits, k);
    const c = cost(p);
    if (c < bestCost) {
      best = p;
      bestCost = c;
    }
  }
  return best;
}
