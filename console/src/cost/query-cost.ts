import type { Manifest } from '../../../core/geo/manifest.ts';

/** One query's cost on a built version, from its manifest alone (pure; shown by the Cost screen). */
export interface QueryCost {
  rows: number;
  columns: number;
  ones: number;
  plan: string;
  /** Per modulus size: bytes each way (wire format of core/pir/WIRE.md). */
  bytes: Array<{ modulusBits: number; up: number; down: number }>;
  /** Modular products per answer: the plan's products plus one blinding square and product per row. */
  products: number;
  /** Products the meter counts per query (the plan's, not the blinding's): what the statement bills. */
  billedProducts: number;
  plainProducts: number;
  /**
   * Each query reveals at most one column's worth of bits (the server answers only proven moduli,
   * core/modulus-proof): this many queries could read the whole matrix.
   */
  queriesForWholeMatrix: number;
  /** Regions a client decodes rows of: one. Rows decoded per query. */
  decodedRows: number;
}

export function queryCost(m: Manifest): QueryCost {
  const { rows, columns, ones, plan } = m.matrix;
  // Wire format (core/pir/WIRE.md): a 10-byte header, then the modulus and one value per column
  // up, one value per row down, each ceil(bits / 8) bytes (as core/build/cost-model.ts counts).
  const bytes = m.modulusBits.map((bits) => {
    const k = Math.ceil(bits / 8);
    return { modulusBits: bits, up: 10 + k * (columns + 1), down: 10 + k * rows };
  });
  const planName = plan.kind === 'blocked' ? `blocked (${plan.blockColumns} columns per table)` : plan.kind === 'mined' ? `mined (${plan.rules} shared products)` : 'plain';
  return {
    rows,
    columns,
    ones,
    plan: planName,
    bytes,
    products: plan.products + 2 * rows,
    billedProducts: plan.products,
    plainProducts: plan.plainProducts + 2 * rows,
    queriesForWholeMatrix: columns,
    decodedRows: m.record.regionBits,
  };
}
