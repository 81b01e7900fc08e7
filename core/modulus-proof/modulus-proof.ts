// The proof a client gives once per key so the server may answer its queries: that its modulus
// leaves at most one bit per answer row (the invariant below). Made by proveModulus
// (prove-modulus.ts), checked by verifyModulusProof (verify-modulus.ts, with the soundness
// argument), carried in the wire format of core/pir/WIRE.md ("Modulus proof body").
//
// The invariant. Let U be the units modulo N, J the units of Jacobi symbol +1 and Q the squares.
// An answer row z_r = s_r^2 prod{ y_j : M[r][j] = 1 } with every y_j in J and s_r^2 uniform in Q
// is uniform in its coset of Q in J: the row reveals that coset and nothing else, log2 |J/Q| bits.
// An honest N = pq gives |J/Q| = 2, one bit per row; a modulus of k distinct primes gives
// 2^(k-1) cosets, k - 1 bits per row. The server answers only moduli proven to have
// |J/Q| <= 2, so one query reveals at most R bits of the matrix: one column's worth.
import type { ModulusBits } from '../pir/params.ts';

/**
 * Challenges per proof. A modulus with |J/Q| >= 4 passes each challenge with probability at most
 * 1/2, so m challenges give 2^-m: the security level of the modulus itself (NIST SP 800-57 Part 1
 * Rev. 5, Table 2: 112 bits for 2048-bit factoring moduli, 128 for 3072).
 */
export const PROOF_CHALLENGES: Readonly<Record<ModulusBits, number>> = { 2048: 112, 3072: 128 };

/**
 * A proof that |J/Q| <= 2 modulo n. c has Jacobi symbol +1 and d has Jacobi symbol -1 modulo n;
 * roots[i]^2 is x_i, c x_i, d x_i or c d x_i modulo n, where x_i is the i-th challenge that
 * deriveChallenges(n, c, d) computes from a hash (the prover never chooses them).
 */
export interface ModulusProof {
  n: bigint;
  c: bigint;
  d: bigint;
  roots: bigint[];
}
