/**
 * The client's secret key. n = p * q with p != q odd primes of equal length; n has exactly
 * modulusBits bits; w is a quadratic non-residue modulo p and modulo q, so Jacobi(w, n) = +1.
 * Only n ever leaves the client.
 */
export interface PirKeyPair {
  n: bigint;
  p: bigint;
  q: bigint;
  w: bigint;
  modulusBits: number;
}
