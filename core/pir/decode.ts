import { legendre } from '../bigint/jacobi.ts';
import type { PirKeyPair } from './keys.ts';

/**
 * The bits of the queried column for answer rows [from, to): 1 exactly when z_r is a non-residue
 * modulo p (Legendre symbol -1), as 0/1 bytes. An honest answer has the same Legendre symbol
 * modulo p and modulo q (Jacobi(z_r, n) = +1), so that is checked too: a mismatch or a z_r
 * outside [1, n) or sharing a factor with n throws RangeError naming the row, which catches
 * most tampered or corrupted answers. Two Jacobi computations per decoded row; variable-time
 * (client side). Throws RangeError unless 0 <= from <= to <= answer.length are integers.
 */
export function decodeRows(key: PirKeyPair, answer: readonly bigint[], from = 0, to = answer.length): Uint8Array {
  if (!Number.isSafeInteger(from) || !Number.isSafeInteger(to) || from < 0 || to < from || to > answer.length) {
    throw new RangeError(`decodeRows: expected 0 <= from <= to <= ${answer.length}, got from=${from}, to=${to}`);
  }
  const out = new Uint8Array(to - from);
  for (let r = from; r < to; r++) {
    const z = answer[r]!;
    if (typeof z !== 'bigint' || z < 1n || z >= key.n) throw new RangeError(`decodeRows: expected row ${r} in [1, n), got ${String(z).slice(0, 20)}`);
    const lp = legendre(z, key.p);
    const lq = legendre(z, key.q);
    if (lp === 0 || lp !== lq) {
      throw new RangeError(`decodeRows: expected row ${r} to have Jacobi symbol +1 and no common factor with n, got (${lp}, ${lq}) modulo (p, q)`);
    }
    out[r - from] = lp === -1 ? 1 : 0;
  }
  return out;
}
