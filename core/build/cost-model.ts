/**
 * What one query costs, in seconds of a reference setting, so builds can weigh matrix shapes
 * against each other: bytes both ways over the link, the server's products, the client's work.
 * The figures are assumptions stated here (and printed by `nearveil plan`), not measurements of
 * any one deployment; the product and Jacobi times come from `npm run bench` on a 2-core machine.
 */
export const COST_MODEL = {
  modulusBits: 2048,
  /** 10 Mbit/s each way: a modest mobile link. */
  linkBytesPerSecond: 1_250_000,
  /** One 2048-bit modular product on the server (plain BigInt, about 8 us in the bench). */
  serverSecondsPerProduct: 8e-6,
  /** Decoding one answer row: two 1024-bit Jacobi symbols (about 75 us each). */
  clientSecondsPerDecodedRow: 150e-6,
  /** Making one query value: a random square modulo n. */
  clientSecondsPerColumn: 50e-6,
} as const;

export interface ShapeCost {
  rows: number;
  columns: number;
  bytesUp: number;
  bytesDown: number;
  products: number;
  decodedRows: number;
  seconds: { transfer: number; server: number; client: number; total: number };
}

/** Cost of one query on an R x C matrix whose answer takes `products` and whose client decodes `decodedRows` rows. */
export function shapeCost(rows: number, columns: number, products: number, decodedRows: number, model = COST_MODEL): ShapeCost {
  const k = Math.ceil(model.modulusBits / 8);
  // Wire format: 10-byte header, then n and one value per column up; one value per row down.
  const bytesUp = 10 + k * (columns + 1);
  const bytesDown = 10 + k * rows;
  const transfer = (bytesUp + bytesDown) / model.linkBytesPerSecond;
  const server = products * model.serverSecondsPerProduct;
  const client = decodedRows * model.clientSecondsPerDecodedRow + columns * model.clientSecondsPerColumn;
  return { rows, columns, bytesUp, bytesDown, products, decodedRows, seconds: { transfer, server, client, total: transfer + server + client } };
}

/**
 * Two rounds run one after the other (a veiled layout's partition round, then its cell round):
 * bytes, products, decoded rows and seconds add up; rows and columns are the second round's.
 */
export function sumCosts(first: ShapeCost, second: ShapeCost): ShapeCost {
  const seconds = {
    transfer: first.seconds.transfer + second.seconds.transfer,
    server: first.seconds.server + second.seconds.server,
    client: first.seconds.client + second.seconds.client,
    total: first.seconds.total + second.seconds.total,
  };
  return {
    rows: second.rows,
    columns: second.columns,
    bytesUp: first.bytesUp + second.bytesUp,
    bytesDown: first.bytesDown + second.bytesDown,
    products: first.products + second.products,
    decodedRows: first.decodedRows + second.decodedRows,
    seconds,
  };
}
