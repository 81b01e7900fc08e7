// A hostile client that builds its modulus from k distinct primes instead of two. The blinding
// s_r^2 hides only the square part of an answer row, so the row's Legendre symbols modulo each
// prime give k - 1 independent bits: k - 1 columns per billed query. Proven moduli stop it; the
// tests keep it to show that they do. Pure (runs in Node and in workerd); seeded, so the same
// primes come back every run.
import { bitLength } from '../../core/bigint/bit-length.ts';
import { legendre } from '../../core/bigint/jacobi.ts';
import { modInverse } from '../../core/bigint/modular.ts';
import { isProbablePrime } from '../../core/bigint/primes.ts';
import { squareRootsModulo } from '../../core/bigint/sqrt-mod-prime.ts';
import { deriveChallenges } from '../../core/modulus-proof/challenges.ts';
import type { ModulusProof } from '../../core/modulus-proof/modulus-proof.ts';
import { PROOF_CHALLENGES } from '../../core/modulus-proof/modulus-proof.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';

/** A seeded stream of 32-bit words (the demo data's mulberry32, scaled back to integers). */
function words(seed: number): () => number {
  const next = seededRandom(seed);
  return () => next() * 2 ** 32;
}

/**
 * `count` distinct primes of `bits` bits each, from a seeded start and the next prime above it.
 * The top six bits are set, so up to sixteen primes multiply to exactly the sum of their bits.
 */
export function seededPrimes(count: number, bits: number, seed: number): bigint[] {
  const next = words(seed);
  const out: bigint[] = [];
  while (out.length < count) {
    let x = 0n;
    for (let i = 0; i < Math.ceil(bits / 32); i++) x = (x << 32n) | BigInt(next());
    x = (x >> BigInt(Math.ceil(bits / 32) * 32 - bits)) | (63n << BigInt(bits - 6)) | 1n;
    while (!isProbablePrime(x)) x += 2n;
    if (bitLength(x) === bits && !out.includes(x)) out.push(x);
  }
  return out;
}

/** The product of the primes; throws unless it has exactly `bits` bits. */
export function productOf(primes: readonly bigint[], bits: number): bigint {
  const n = primes.reduce((a, b) => a * b, 1n);
  if (bitLength(n) !== bits) throw new RangeError(`productOf: expected ${bits} bits, got ${bitLength(n)}`);
  return n;
}

/** The x with x = residues[i] mod primes[i] (Chinese remainder theorem, distinct primes). */
function crt(primes: readonly bigint[], residues: readonly bigint[]): bigint {
  const n = primes.reduce((a, b) => a * b, 1n);
  let x = 0n;
  primes.forEach((p, i) => {
    const rest = n / p;
    x += residues[i]! * rest * modInverse(rest % p, p);
  });
  return ((x % n) + n) % n;
}

const leastNonResidue = (p: bigint) => {
  let z = 2n;
  while (legendre(z, p) !== -1) z++;
  return z;
};

/** A unit with the given Legendre signs modulo each prime (true: a non-residue there). */
function withSigns(primes: readonly bigint[], nonResidue: readonly boolean[]): bigint {
  return crt(primes, primes.map((p, i) => (nonResidue[i] ? leastNonResidue(p) : 1n)));
}

/**
 * The hostile query: column columns[i] (i < k - 1) gets a value that is a non-residue modulo
 * prime i and the last prime and a residue elsewhere (Jacobi symbol +1, so it passes every
 * per-value check); all other columns get squares. Every value is blinded by a fresh square.
 */
export function multiPrimeQuery(primes: readonly bigint[], totalColumns: number, columns: readonly number[], seed: number): bigint[] {
  if (columns.length > primes.length - 1) throw new RangeError(`multiPrimeQuery: at most ${primes.length - 1} columns with ${primes.length} primes`);
  const n = primes.reduce((a, b) => a * b, 1n);
  const next = words(seed);
  const k = primes.length;
  const marks = columns.map((_, i) => withSigns(primes, primes.map((_, l) => l === i || l === k - 1)));
  return Array.from({ length: totalColumns }, (_, j) => {
    let r = 0n;
    for (let w = 0; w < bitLength(n) / 32 + 2; w++) r = (r << 32n) | BigInt(next());
    r = (r % (n - 2n)) + 2n;
    const square = (r * r) % n;
    const i = columns.indexOf(j);
    return i < 0 ? square : (marks[i]! * square) % n;
  });
}

/** Reads the chosen columns from answer rows: bit (row, i) is 1 when the row is a non-residue modulo prime i. */
export function readColumns(primes: readonly bigint[], rows: readonly bigint[], columnCount: number): number[][] {
  return Array.from({ length: columnCount }, (_, i) => rows.map((z) => (legendre(z % primes[i]!, primes[i]!) === -1 ? 1 : 0)));
}

/**
 * The best proof a prover who knows every prime can make: c and d of the wanted Jacobi symbols
 * (c a non-residue modulo the first two primes, d modulo the first alone), and for each challenge
 * a true root of x, c x, d x or c d x whenever one exists; otherwise 1 (a wrong root).
 * Returns the proof and which challenges it could answer.
 */
export function bestMultiPrimeProof(primes: readonly bigint[]): { proof: ModulusProof; answered: boolean[] } {
  const n = primes.reduce((a, b) => a * b, 1n);
  const count = PROOF_CHALLENGES[bitLength(n) as keyof typeof PROOF_CHALLENGES];
  const c = withSigns(primes, primes.map((_, i) => i < 2));
  const d = withSigns(primes, primes.map((_, i) => i === 0));
  const challenges = deriveChallenges(n, c, d, count);
  const roots = primes.map((p) => squareRootsModulo(p));
  const answered: boolean[] = [];
  const proofRoots = challenges.map((x) => {
    for (const e of [1n, c, d, (c * d) % n]) {
      const y = (e * x) % n;
      if (primes.every((p) => legendre(y % p, p) === 1)) {
        answered.push(true);
        return crt(primes, primes.map((p, i) => roots[i]!(y % p)));
      }
    }
    answered.push(false);
    return 1n;
  });
  return { proof: { n, c, d, roots: proofRoots }, answered };
}
