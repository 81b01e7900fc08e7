import { sha256 } from '@noble/hashes/sha2.js';
import { bigintToBytes } from '../bigint/bytes.ts';
import { legendre } from '../bigint/jacobi.ts';
import { modInverse } from '../bigint/modular.ts';
import { squareRootsModulo } from '../bigint/sqrt-mod-prime.ts';
import type { PirKeyPair } from '../pir/keys.ts';
import { deriveChallenges } from './challenges.ts';
import { PROOF_CHALLENGES, type ModulusProof } from './modulus-proof.ts';

/** Domain tag of the key that picks one of the four roots (never leaves the client). */
const ROOT_CHOICE_TAG = 'nearveil modulus proof v1: root choice';

/**
 * The proof that key.n leaves one bit per answer row (modulus-proof.ts), made by the key holder.
 * - c = key.w, a non-residue modulo p and modulo q (the pseudo-square a Goldwasser-Micali public
 *   key publishes; any pseudo-square gives the server the same power, since w r^2 is one too).
 * - d = the least integer >= 2 of Jacobi symbol -1 modulo n (public knowledge).
 * - With N = pq, 1, c, d and c d fall in the four cosets of the squares, so for every challenge
 *   x exactly one of x, c x, d x, c d x is a square: its four roots come from Tonelli-Shanks
 *   modulo p and q and the Chinese remainder theorem.
 * - Which of the four roots: two bits of SHA-256(choice key || x), the choice key a hash of p and
 *   q. So a root is the same every time the same key proves (the server never sees two different
 *   roots of one value, which would factor n), and looks like a uniformly chosen root, which
 *   anyone can make by squaring a random number: the roots teach the server nothing about p, q.
 * The whole proof is a function of the key alone: proving again gives the same bytes.
 * Cost: two square roots modulo 1024-bit primes per challenge (about 0.6 s for 112 challenges,
 * see the bench). Variable-time (client side, on the client's own secrets).
 * Throws RangeError for a key whose modulus size has no challenge count, or (probability about
 * 2^-1000) a challenge sharing a factor with n.
 */
export function proveModulus(key: PirKeyPair): ModulusProof {
  const { n, p, q, w: c } = key;
  const count = PROOF_CHALLENGES[key.modulusBits as keyof typeof PROOF_CHALLENGES];
  if (count === undefined) throw new RangeError(`proveModulus: expected a modulus of ${Object.keys(PROOF_CHALLENGES).join(' or ')} bits, got ${key.modulusBits}`);
  const d = leastOfJacobiMinusOne(p, q);
  const classOf = (x: bigint): [number, number] => [legendre(x % p, p), legendre(x % q, q)];
  // Multipliers by the coset they fix: x times the multiplier of x's own class is a square.
  const [dp, dq] = classOf(d);
  const multipliers = new Map<string, bigint>([
    ['1,1', 1n],
    [`${legendre(c % p, p)},${legendre(c % q, q)}`, c],
    [`${dp},${dq}`, d],
    [`${-dp},${-dq}`, (c * d) % n],
  ]);
  const challenges = deriveChallenges(n, c, d, count);
  const choiceKey = rootChoiceKey(p, q);
  const qInverse = modInverse(q, p);
  const [rootModP, rootModQ] = [squareRootsModulo(p), squareRootsModulo(q)];
  const roots: bigint[] = [];
  for (const [i, x] of challenges.entries()) {
    const multiplier = multipliers.get(classOf(x).join(','));
    if (multiplier === undefined) throw new RangeError(`proveModulus: challenge ${i} shares a factor with n; generate a new key`);
    const y = (multiplier * x) % n;
    const choice = rootChoice(choiceKey, x, Math.ceil(key.modulusBits / 8));
    let rp = rootModP(y);
    let rq = rootModQ(y);
    if (choice & 1) rp = p - rp;
    if (choice & 2) rq = q - rq;
    // Chinese remainder theorem (Garner): r = rq + q ((rp - rq) q^-1 mod p).
    const r = rq + q * ((((rp - rq) % p) + p) * qInverse % p);
    if ((r * r) % n !== y) throw new RangeError(`proveModulus: internal check failed for challenge ${i}`);
    roots.push(r);
  }
  return { n, c, d, roots };
}

/** The least d >= 2 with Jacobi symbol (d/pq) = (d/p)(d/q) = -1. */
function leastOfJacobiMinusOne(p: bigint, q: bigint): bigint {
  for (let d = 2n; ; d++) if (legendre(d, p) * legendre(d, q) === -1) return d;
}

function rootChoiceKey(p: bigint, q: bigint): Uint8Array {
  const width = Math.ceil(p.toString(16).length / 2);
  const tag = new TextEncoder().encode(ROOT_CHOICE_TAG);
  const input = new Uint8Array(tag.length + 2 * width);
  input.set(tag, 0);
  input.set(bigintToBytes(p, width), tag.length);
  input.set(bigintToBytes(q, width), tag.length + width);
  return sha256(input);
}

/** Two pseudo-random bits for challenge x: which sign modulo p (bit 0) and modulo q (bit 1). */
function rootChoice(choiceKey: Uint8Array, x: bigint, k: number): number {
  const input = new Uint8Array(choiceKey.length + k);
  input.set(choiceKey, 0);
  input.set(bigintToBytes(x, k), choiceKey.length);
  return sha256(input)[0]! & 3;
}
