import { checkPrimeSync } from 'node:crypto';
import { BigInteger } from 'jsbn';
import { beforeAll, describe, expect, it } from 'vitest';
import { bitLength } from '../../../core/bigint/bit-length.ts';
import { InputError } from '../../../core/errors/input-error.ts';
import { deriveChallenges } from '../../../core/modulus-proof/challenges.ts';
import { modulusFingerprint } from '../../../core/modulus-proof/fingerprint.ts';
import { PROOF_CHALLENGES, type ModulusProof } from '../../../core/modulus-proof/modulus-proof.ts';
import { proveModulus } from '../../../core/modulus-proof/prove-modulus.ts';
import { verifyModulusProof } from '../../../core/modulus-proof/verify-modulus.ts';
import { answerQuery } from '../../../core/pir/answer.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { decodeModulusProof, encodeModulusProof, proofByteLength } from '../../../core/pir/wire.ts';
import { readColumn } from '../../../core/matrix/bit-matrix.ts';
import { bestMultiPrimeProof, multiPrimeQuery, productOf, readColumns, seededPrimes } from '../../attack/multi-prime-client.ts';
import { randomMatrix } from '../pir/random-matrix.ts';

// Outside references: jsbn squares every root again and computes the Jacobi symbols of c and d by
// Euler's criterion from the known primes; node:crypto checkPrime checks every prime a test builds.
const big = (x: bigint) => new BigInteger(x.toString(16), 16);
const back = (x: BigInteger) => BigInt('0x' + x.toString(16));
const squareJsbn = (r: bigint, n: bigint) => back(big(r).multiply(big(r)).mod(big(n)));
/** Legendre symbol by Euler's criterion in jsbn (p prime). */
const eulerJsbn = (a: bigint, p: bigint) => {
  const v = back(big(a % p).modPow(big((p - 1n) / 2n), big(p)));
  return v === 1n ? 1 : v === 0n ? 0 : -1;
};

function refusal(proof: ModulusProof): InputError {
  try {
    verifyModulusProof(proof);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error('expected the proof to be refused, it was accepted');
}

/** Every root of an honest proof squares to x, c x, d x or c d x: checked in jsbn, apart from the verifier. */
function checkRootsWithJsbn(key: PirKeyPair, proof: ModulusProof): void {
  const challenges = deriveChallenges(proof.n, proof.c, proof.d, proof.roots.length);
  proof.roots.forEach((r, i) => {
    const x = challenges[i]!;
    const allowed = [1n, proof.c, proof.d, proof.c * proof.d].map((e) => back(big(e).multiply(big(x)).mod(big(key.n))));
    expect(allowed, `root ${i}`).toContain(squareJsbn(r, key.n));
  });
  expect(eulerJsbn(proof.c, key.p) * eulerJsbn(proof.c, key.q), 'Jacobi(c, n) by Euler in jsbn').toBe(1);
  expect(eulerJsbn(proof.d, key.p) * eulerJsbn(proof.d, key.q), 'Jacobi(d, n) by Euler in jsbn').toBe(-1);
}

describe('honest keys always prove their modulus', () => {
  // Keys come from WebCrypto (as the SDK makes them), so they cannot be seeded: every failure
  // message carries the key's modulus and primes, enough to replay it.
  const cases = [
    { bits: 2048, lowOnes: true, keys: 3 },
    { bits: 2048, lowOnes: false, keys: 3 },
    { bits: 3072, lowOnes: true, keys: 1 },
    { bits: 3072, lowOnes: false, keys: 1 },
  ];
  it.each(cases)('$bits-bit keys, low ones $lowOnes: verified, roots checked in jsbn, bytes round-trip', async ({ bits, lowOnes, keys }) => {
    for (let i = 0; i < keys; i++) {
      const key = await generateKeyPair({ modulusBits: bits, lowOnes });
      const replay = `p=${key.p.toString(16)} q=${key.q.toString(16)} w=${key.w.toString(16)}`;
      const proof = proveModulus(key);
      expect(proof.roots, replay).toHaveLength(PROOF_CHALLENGES[bits as 2048 | 3072]);
      expect(() => verifyModulusProof(proof), replay).not.toThrow();
      checkRootsWithJsbn(key, proof);
      const bytes = encodeModulusProof(proof);
      expect(bytes.length).toBe(proofByteLength(bits, proof.roots.length));
      expect(() => verifyModulusProof(decodeModulusProof(bytes)), replay).not.toThrow();
    }
  });

  it('gives the same proof every time for one key, so the server never sees two roots of one value', async () => {
    const key = await generateKeyPair({ modulusBits: 2048 });
    expect(encodeModulusProof(proveModulus(key))).toEqual(encodeModulusProof(proveModulus(key)));
  });

  it('sizes: 29,450 bytes at 2048 bits and 50,314 at 3072 (header, n, c, d, one root per challenge)', () => {
    expect(proofByteLength(2048, 112)).toBe(10 + 256 * 115);
    expect(proofByteLength(3072, 128)).toBe(10 + 384 * 131);
  });
});

describe('tampered proofs are refused, naming the failing part', () => {
  let key: PirKeyPair;
  let proof: ModulusProof;
  beforeAll(async () => {
    key = await generateKeyPair({ modulusBits: 2048 });
    proof = proveModulus(key);
  });

  it('one wrong root', () => {
    for (const i of [0, 57, 111]) {
      const roots = [...proof.roots];
      roots[i] = (roots[i]! * 3n) % key.n;
      expect([refusal({ ...proof, roots }).field, refusal({ ...proof, roots }).status]).toEqual([`roots[${i}]`, 422]);
    }
  });

  it('the other root of the same pair is fine, but a root out of range is not', () => {
    const roots = [...proof.roots];
    roots[5] = key.n - roots[5]!;
    expect(() => verifyModulusProof({ ...proof, roots })).not.toThrow();
    roots[5] = roots[5]! + key.n;
    expect(refusal({ ...proof, roots }).field).toBe('roots[5]');
  });

  it('reordered, truncated or lengthened lists', () => {
    const swapped = [...proof.roots];
    [swapped[3], swapped[4]] = [swapped[4]!, swapped[3]!];
    expect(refusal({ ...proof, roots: swapped }).field).toBe('roots[3]');
    expect(refusal({ ...proof, roots: proof.roots.slice(0, 111) }).field).toBe('roots');
    expect(refusal({ ...proof, roots: [...proof.roots, proof.roots[0]!] }).field).toBe('roots');
    expect(refusal({ ...proof, roots: proof.roots.slice(1) }).field).toBe('roots');
  });

  it('a wrong c or d: other challenges follow, and the symbols are checked', () => {
    // Another pseudo-square: the challenges change, so the old roots fail.
    const c2 = (proof.c * 4n) % key.n;
    expect(refusal({ ...proof, c: c2 }).field).toMatch(/^roots\[\d+\]$/);
    // A square as c (Jacobi +1 still) changes the challenges too.
    expect(refusal({ ...proof, c: 4n }).field).toMatch(/^roots\[\d+\]$/);
    // c of Jacobi -1, d of Jacobi +1, and values outside [1, n).
    expect(refusal({ ...proof, c: proof.d }).field).toBe('c');
    expect(refusal({ ...proof, d: proof.c }).field).toBe('d');
    expect(refusal({ ...proof, c: 0n }).field).toBe('c');
    expect(refusal({ ...proof, d: key.n + proof.d }).field).toBe('d');
  });

  it('a proof for another modulus', async () => {
    const other = await generateKeyPair({ modulusBits: 2048 });
    expect(refusal({ ...proveModulus(other), n: key.n }).field).toMatch(/^(c|d|roots\[\d+\])$/);
  });

  it('moduli of a size queries may not use', () => {
    const e = refusal({ ...proof, n: key.n * 3n });
    expect([e.code, e.field]).toEqual(['modulus_size', 'modulus']);
    expect(refusal({ ...proof, n: key.n + 1n }).code).toBe('modulus_even');
  });

  it('names the modulus by SHA-256 of its canonical bytes (node:crypto agrees)', async () => {
    const { createHash } = await import('node:crypto');
    expect(modulusFingerprint(key.n)).toBe(createHash('sha256').update(Buffer.from(key.n.toString(16).padStart(512, '0'), 'hex')).digest('hex'));
  });
});

describe('challenges come from the hash alone', () => {
  it('are in [1, n), depend on n, c and d, and a longer list starts with the shorter one', async () => {
    const key = await generateKeyPair({ modulusBits: 2048 });
    const proof = proveModulus(key);
    const xs = deriveChallenges(key.n, proof.c, proof.d, 112);
    expect(xs.every((x) => x >= 1n && x < key.n)).toBe(true);
    expect(new Set(xs).size).toBe(112);
    expect(deriveChallenges(key.n, proof.c, proof.d, 20)).toEqual(xs.slice(0, 20));
    expect(deriveChallenges(key.n, proof.c + 1n, proof.d, 1)[0]).not.toBe(xs[0]);
    expect(deriveChallenges(key.n, proof.c, proof.d + 1n, 1)[0]).not.toBe(xs[0]);
    // Uniform over [1, n): about half the challenges lie below n / 2.
    const low = xs.filter((x) => x < key.n / 2n).length;
    expect(low).toBeGreaterThan(30);
    expect(low).toBeLessThan(82);
  });
});

describe('the soundness lemma, by enumeration of small moduli', () => {
  // For odd N (factored), count the units U, squares Q and Jacobi +1 units J, and the largest
  // share of U four cosets Q, cQ, dQ, cdQ can cover with Jacobi(d) = -1. Legendre symbols by
  // Euler's criterion on the factors: nothing of the project's code is used.
  const legendreSmall = (a: number, p: number) => {
    let r = 1;
    for (let i = 0; i < (p - 1) / 2; i++) r = (r * (a % p)) % p;
    return r === 0 ? 0 : r === 1 ? 1 : -1;
  };
  const jacobiSmall = (a: number, factors: number[]) => factors.reduce((s, p) => s * legendreSmall(a, p), 1);
  const gcd = (a: number, b: number): number => (b === 0 ? a : gcd(b, a % b));

  function census(factors: number[]) {
    const n = factors.reduce((a, b) => a * b, 1);
    const units = Array.from({ length: n }, (_, x) => x).filter((x) => x > 0 && gcd(x, n) === 1);
    const squares = new Set(units.map((x) => (x * x) % n));
    const j = units.filter((x) => jacobiSmall(x, factors) === 1);
    const jOverQ = j.length / squares.size;
    const minusOne = units.filter((x) => jacobiSmall(x, factors) === -1);
    let best = 0;
    for (const c of j) {
      for (const d of minusOne.slice(0, 6)) {
        const covered = units.filter((x) => [1, c, d, c * d].some((e) => squares.has((e * x) % n))).length;
        best = Math.max(best, covered / units.length);
      }
    }
    return { jOverQ, best, hasD: minusOne.length > 0 };
  }

  it.each([
    ['5 x 7 (two primes)', [5, 7], 2, true],
    ['11 x 13 (two primes)', [11, 13], 2, true],
    ['3 x 3 x 7 (p^2 q)', [3, 3, 7], 2, true],
    ['3 x 5 x 7 (three primes)', [3, 5, 7], 4, false],
    ['3 x 5 x 7 x 11 (four primes)', [3, 5, 7, 11], 8, false],
    ['3 x 3 x 5 x 5 (p^2 q^2)', [3, 3, 5, 5], 4, false],
  ] as const)('%s: |J/Q| = %i; four cosets cover all units exactly when |J/Q| <= 2', (_label, factors, jOverQ, passes) => {
    const c = census([...factors]);
    expect(c.jOverQ).toBe(jOverQ);
    if (passes) expect(c.best).toBe(1);
    else expect(c.hasD ? c.best : 0).toBeLessThanOrEqual(0.5);
  });
});

describe('the multi-prime client', () => {
  // 8 primes of 256 bits make a 2048-bit modulus (seeded; node:crypto confirms the primes).
  const primes = seededPrimes(8, 256, 12);
  const n = productOf(primes, 2048);

  it('builds real primes', () => {
    for (const p of primes) expect(checkPrimeSync(p), `node:crypto checkPrime ${p.toString(16)}`).toBe(true);
    expect(bitLength(n)).toBe(2048);
  });

  it('reads 7 columns from ONE answer of an unchecked server: the attack the proof stops', () => {
    const matrix = randomMatrix(24, 30, 0.5, 7);
    const chosen = [1, 4, 9, 10, 17, 22, 29];
    const rows = answerQuery(matrix, n, multiPrimeQuery(primes, 30, chosen, 3));
    const read = readColumns(primes, rows, chosen.length);
    chosen.forEach((column, i) => expect(read[i], `column ${column}`).toEqual(Array.from(readColumn(matrix, column))));
  });

  it.each([
    ['3 primes', 3, [683, 683, 682]],
    ['4 primes', 4, [512, 512, 512, 512]],
    ['8 primes', 8, [256]],
    ['16 primes', 16, [128]],
  ] as const)('%s: its best proof (it knows every factor) is refused', (_label, k, sizes) => {
    const ps = k === 3 ? sizes.map((bits, i) => seededPrimes(1, bits, 100 + i)[0]!) : seededPrimes(k, sizes[0]!, 200 + k);
    for (const p of ps) expect(checkPrimeSync(p)).toBe(true);
    productOf(ps, 2048);
    const { proof, answered } = bestMultiPrimeProof(ps);
    const firstMissing = answered.indexOf(false);
    expect(firstMissing).toBeGreaterThanOrEqual(0);
    const e = refusal(proof);
    expect([e.code, e.field]).toEqual(['modulus_proof', `roots[${firstMissing}]`]);
    // Four cosets of 2^(k-1) in J, i.e. 2^k in U: the share it could answer is about 4 / 2^k.
    const share = answered.filter(Boolean).length / answered.length;
    expect(Math.abs(share - 4 / 2 ** k)).toBeLessThan(0.2);
  });

  it('answers every challenge for two primes (the same prover is competent) and is accepted', () => {
    const ps = seededPrimes(2, 1024, 5);
    const { proof, answered } = bestMultiPrimeProof(ps);
    expect(answered.every(Boolean)).toBe(true);
    expect(() => verifyModulusProof(proof)).not.toThrow();
  });

  it('refuses 3 x 5 x 7 x q: some challenge shares a factor with it', () => {
    const q = seededPrimes(1, 2041, 21)[0]!;
    expect(checkPrimeSync(q)).toBe(true);
    const { proof } = bestMultiPrimeProof([3n, 5n, 7n, q]);
    const e = refusal(proof);
    expect([e.code, e.field]).toEqual(['modulus_proof', 'challenges']);
  });

  it('refuses p^2 q^2 for want of a d of Jacobi symbol -1', () => {
    const [p, q] = seededPrimes(2, 512, 9);
    const n2 = productOf([p!, p!, q!, q!], 2048);
    const honest = bestMultiPrimeProof(seededPrimes(2, 1024, 5)).proof;
    for (let d = 2n; d < 50n; d++) expect(refusal({ ...honest, n: n2, d }).field).toMatch(/^(c|d)$/);
  });
});
