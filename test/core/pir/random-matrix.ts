import { createBitMatrix, setBit, type BitMatrix } from '../../../core/matrix/bit-matrix.ts';

/** A reproducible random bit matrix: each bit is 1 with probability `density`, from a seeded LCG (Numerical Recipes constants). */
export function randomMatrix(rows: number, columns: number, density: number, seed: number): BitMatrix {
  let state = seed >>> 0;
  const next = () => ((state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  const m = createBitMatrix(rows, columns);
  for (let r = 0; r < rows; r++) for (let c = 0; c < columns; c++) if (next() < density) setBit(m, r, c, 1);
  return m;
}
