import { jacobi } from './jacobi.ts';
import { mod, modPow } from './modular.ts';

/**
 * A square root of a modulo an odd prime p: r in [0, p) with r^2 = a mod p, by the
 * Tonelli-Shanks algorithm (Handbook of Applied Cryptography, Algorithm 3.34, from memory), so no
 * condition on p mod 4. Which of the two roots comes back is fixed by a and p (the caller picks
 * the sign it wants). The result is squared back and checked before it is returned.
 * Requires p an odd prime (the caller's promise: for a composite p the final check still refuses
 * a wrong root). Throws TypeError for non-bigints, RangeError when p < 3 or even, or when a is not
 * a square modulo p. Variable-time: use on secrets only where timing is not observed (the client
 * proving its own modulus).
 */
export function sqrtModPrime(a: bigint, p: bigint): bigint {
  return squareRootsModulo(p)(a);
}

/**
 * sqrtModPrime for many values modulo one prime: p - 1 = 2^s t and z^t for a non-residue z are
 * worked out once. Each root then costs one exponentiation x^((t-1)/2) plus, when s > 1, at most
 * s(s-1)/2 squarings. Same contract and errors as sqrtModPrime.
 */
export function squareRootsModulo(p: bigint): (a: bigint) => bigint {
  if (typeof p !== 'bigint') throw new TypeError(`sqrtModPrime: expected bigint p, got ${typeof p}`);
  if (p < 3n || (p & 1n) === 0n) throw new RangeError(`sqrtModPrime: expected an odd prime p, got ${p}`);
  let s = 0;
  let t = p - 1n;
  while ((t & 1n) === 0n) {
    t >>= 1n;
    s++;
  }
  const half = (t - 1n) >> 1n;
  let generator: bigint | undefined; // z^t, generates the 2-Sylow subgroup; needed only when s > 1
  return (a) => {
    if (typeof a !== 'bigint') throw new TypeError(`sqrtModPrime: expected bigint a, got ${typeof a}`);
    const x = mod(a, p);
    if (x === 0n) return 0n;
    // u = x^((t-1)/2) gives both r = x^((t+1)/2) = x u and b = x^t = r u: one exponentiation.
    const u = modPow(x, half, p);
    let r = (x * u) % p;
    let b = (r * u) % p;
    let g = b === 1n ? 1n : (generator ??= modPow(smallestNonResidue(p), t, p));
    let m = s;
    while (b !== 1n) {
      // The least i with b^(2^i) = 1; it reaches m only when x is a non-residue.
      let i = 0;
      for (let b2 = b; b2 !== 1n && i < m; i++) b2 = (b2 * b2) % p;
      if (i === m) break;
      let f = g;
      for (let k = 0; k < m - i - 1; k++) f = (f * f) % p;
      r = (r * f) % p;
      g = (f * f) % p;
      b = (b * g) % p;
      m = i;
    }
    if ((r * r) % p !== x) throw new RangeError('sqrtModPrime: expected a square modulo p, got a non-residue');
    return r;
  };
}

/**
 * The least z >= 2 with Legendre symbol (z/p) = -1. For a prime it is tiny (below 2 (ln p)^2
 * under the generalised Riemann hypothesis: Bach 1990, from memory); the bound only stops a
 * perfect square passed as p from looping for ever.
 */
function smallestNonResidue(p: bigint): bigint {
  for (let z = 2n; z < 1n << 20n; z++) if (jacobi(z, p) === -1) return z;
  throw new RangeError('sqrtModPrime: expected an odd prime p, found no non-residue below 2^20');
}
