/**
 * The Jacobi symbol (a/n) for odd n >= 1 and any bigint a, by the binary algorithm: strip factors
 * of two (each flips the sign when n = 3 or 5 mod 8), then swap by quadratic reciprocity (flip
 * when both are 3 mod 4) and reduce. No exponentiation, no factoring of n.
 *
 * Variable-time: the running time depends on a and n. Use it on public values, or on secrets only
 * where timing is not observable (the client decoding its own answer).
 * Throws TypeError for non-bigints, RangeError when n is even or < 1.
 */
export function jacobi(a: bigint, n: bigint): -1 | 0 | 1 {
  if (typeof a !== 'bigint' || typeof n !== 'bigint') {
    throw new TypeError(`jacobi: expected bigints, got ${typeof a} and ${typeof n}`);
  }
  if (n < 1n || (n & 1n) === 0n) throw new RangeError(`jacobi: expected odd n >= 1, got ${n}`);
  let x = a % n;
  if (x < 0n) x += n;
  let m = n;
  let sign: -1 | 1 = 1;
  while (x !== 0n) {
    // Strip all factors of two with one shift: (2/m) = -1 exactly when m = 3 or 5 mod 8.
    const twos = trailingZeros(x);
    if (twos > 0) {
      x >>= BigInt(twos);
      const r = m & 7n;
      if ((twos & 1) === 1 && (r === 3n || r === 5n)) sign = sign === 1 ? -1 : 1;
    }
    [x, m] = [m, x];
    if ((x & 3n) === 3n && (m & 3n) === 3n) sign = sign === 1 ? -1 : 1;
    x %= m;
  }
  return m === 1n ? sign : 0;
}

/** Number of trailing zero bits of x > 0, read 32 bits at a time (a BigInt shift allocates). */
function trailingZeros(x: bigint): number {
  let count = 0;
  let low = Number(x & 0xffffffffn);
  while (low === 0) {
    count += 32;
    x >>= 32n;
    low = Number(x & 0xffffffffn);
  }
  return count + 31 - Math.clz32(low & -low);
}

/**
 * The Legendre symbol (a/p) for an odd prime p: equal to the Jacobi symbol, so the same binary
 * algorithm and the same variable-time caveat. The primality of p is the caller's promise and is
 * not checked; for a composite p the result is the Jacobi symbol, not a residuosity verdict.
 */
export function legendre(a: bigint, p: bigint): -1 | 0 | 1 {
  return jacobi(a, p);
}
