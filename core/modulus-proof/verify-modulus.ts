import { jacobi } from '../bigint/jacobi.ts';
import { gcd } from '../bigint/modular.ts';
import { InputError } from '../errors/input-error.ts';
import { validateModulus } from '../pir/validate.ts';
import { deriveChallenges } from './challenges.ts';
import { PROOF_CHALLENGES, type ModulusProof } from './modulus-proof.ts';

/**
 * The server's check that proof.n leaves at most one bit per answer row, |J/Q| <= 2 (the
 * invariant in modulus-proof.ts). Returns when the proof holds; throws InputError otherwise:
 * `modulus_even` / `modulus_size` (field "modulus", 400) as for a query, or `modulus_proof`
 * (422) with the field of the first failing part: "roots" (not exactly PROOF_CHALLENGES[bits]
 * of them), "c" (not in [1, n) with Jacobi symbol +1), "d" (not in [1, n) with Jacobi symbol -1),
 * "challenges" (a challenge shares a factor with n), "roots[i]" (out of range, or its square is
 * none of x_i, c x_i, d x_i, c d x_i).
 *
 * The method is the square-root technique for certifying moduli (J. van de Graaf and R. Peralta,
 * "A simple and secure way to show the validity of your public key", CRYPTO 1987; J. Boyar,
 * K. Friedl and C. Lund, "Practical zero-knowledge proofs", 1989; S. Goldberg, L. Reyzin,
 * O. Sagga and F. Baldimtsi, "Efficient noninteractive certification of RSA moduli and beyond",
 * ASIACRYPT 2019; all from memory), with challenges from a hash as in the last, and a published
 * pseudo-square c in place of the -1 those use for Blum integers, so p and q need no condition
 * mod 4. A second published element d of Jacobi symbol -1 lets the challenges range over all
 * units, so the verifier needs one Jacobi symbol for d instead of one per challenge.
 *
 * Soundness. Let U be the units modulo n, Q the squares of units, J the kernel of the Jacobi
 * symbol on U. U/Q is an elementary abelian 2-group (every u^2 is in Q), so |J/Q| is a power of 2.
 *   1. Jacobi(d, n) = -1 (which also makes d a unit) means the symbol maps U onto {+1, -1}:
 *      |U/J| = 2 and |U/Q| = 2 |J/Q|. (A perfect square n has no such d: the symbol is +1 on all
 *      of U, so it is refused here.)
 *   2. A root r with r^2 = e x (e one of 1, c, d, c d) exists only when x is in e^-1 Q = e Q
 *      (e^2 is a square). So a challenge passes only when x lies in one of at most four cosets
 *      of Q, whatever c and d are.
 *   3. If |J/Q| >= 4 then |U/Q| >= 8, and four cosets hold at most half of U. The verifier
 *      refuses the proof unless every challenge is a unit (one gcd of their product with n), and
 *      a uniform challenge is a unit in one of those cosets with probability at most
 *      (|U| / 2) / (n - 1) <= 1/2.
 *   4. The challenges are uniform in [1, n) and independent given (n, c, d) (SHA-256 as a random
 *      oracle, exact rejection sampling: challenges.ts), and the verifier derives all of them
 *      itself, in order. So a proof for one (n, c, d) with |J/Q| >= 4 is accepted with
 *      probability at most 2^-m, m = PROOF_CHALLENGES[bits]: 2^-112 at 2048 bits, 2^-128 at 3072.
 *   5. Grinding: each new (n, c, d) costs a prover a fresh hash evaluation and wins with at most
 *      2^-m, so T tries win with at most T 2^-m: as much work as factoring a modulus of that size
 *      (the same security level), and the choice of c or d cannot steer any challenge.
 * An honest n = pq passes always: with c a non-residue modulo both p and q and d of Jacobi -1,
 * the cosets of 1, c, d, c d are the four cosets of Q in U. A prime n passes too, and leaves 0 bits
 * per row (J = Q); n = p^a q^b with one exponent odd leaves 1 bit; k >= 3 distinct primes or a
 * perfect square are refused.
 *
 * Cost: one SHA-256 digest per 32 bytes of every candidate challenge (about 1,200 at 2048 bits),
 * two Jacobi symbols, one gcd and up to four products per challenge (`npm run bench` times it).
 * Variable-time (every input is public).
 */
export function verifyModulusProof(proof: ModulusProof): void {
  const { n, c, d, roots } = proof;
  const bits = validateModulus(n);
  const count = PROOF_CHALLENGES[bits];
  if (roots.length !== count) refuse('roots', `expected ${count} roots for a ${bits}-bit modulus, got ${roots.length}`);
  if (c < 1n || c >= n || jacobi(c, n) !== 1) refuse('c', 'expected 1 <= c < modulus with Jacobi symbol +1');
  if (d < 1n || d >= n || jacobi(d, n) !== -1) refuse('d', 'expected 1 <= d < modulus with Jacobi symbol -1');
  const challenges = deriveChallenges(n, c, d, count);
  let product = 1n;
  for (const x of challenges) product = (product * x) % n;
  if (gcd(product, n) !== 1n) refuse('challenges', 'a challenge shares a factor with the modulus (its factors are small or the proof is for another modulus)');
  const cd = (c * d) % n;
  for (let i = 0; i < count; i++) {
    const r = roots[i]!;
    const x = challenges[i]!;
    if (r < 1n || r >= n) refuse(`roots[${i}]`, `expected 1 <= root < modulus`);
    const square = (r * r) % n;
    if (square !== x && square !== (c * x) % n && square !== (d * x) % n && square !== (cd * x) % n) {
      refuse(`roots[${i}]`, `the square of root ${i} is none of x, c x, d x, c d x for challenge ${i}`);
    }
  }
}

function refuse(field: string, message: string): never {
  throw new InputError('modulus_proof', field, `${field}: ${message}`, { status: 422 });
}
