// Plain modular arithmetic on bigint. All of it is variable-time: fine for public values and for
// the client's own secrets on the client, not for code that must hide timing from an observer.

function checkModulus(fn: string, n: bigint): void {
  if (typeof n !== 'bigint') throw new TypeError(`${fn}: expected bigint modulus, got ${typeof n}`);
  if (n < 1n) throw new RangeError(`${fn}: expected modulus >= 1, got ${n}`);
}

/** Least non-negative residue of a modulo n (n >= 1). */
export function mod(a: bigint, n: bigint): bigint {
  checkModulus('mod', n);
  const r = a % n;
  return r < 0n ? r + n : r;
}

/**
 * base^exp mod n by left-to-right sliding windows (Handbook of Applied Cryptography, Algorithm
 * 14.85, from memory): odd powers up to base^(2^w - 1) are tabulated, then one product per window
 * of up to w bits instead of one per 1-bit (about a fifth fewer products for 1024-bit exponents).
 * Requires n >= 1 and exp >= 0 (RangeError otherwise); base may be any bigint. Variable-time in exp.
 */
export function modPow(base: bigint, exp: bigint, n: bigint): bigint {
  checkModulus('modPow', n);
  if (typeof base !== 'bigint' || typeof exp !== 'bigint') {
    throw new TypeError(`modPow: expected bigint base and exponent, got ${typeof base} and ${typeof exp}`);
  }
  if (exp < 0n) throw new RangeError(`modPow: expected exponent >= 0, got ${exp}`);
  if (n === 1n) return 0n;
  const b = mod(base, n);
  const bits = exp.toString(2);
  const w = bits.length > 512 ? 5 : bits.length > 96 ? 4 : 1;
  const odd = [b]; // odd[i] = b^(2i + 1)
  const square = (b * b) % n;
  for (let i = 1; i < 1 << (w - 1); i++) odd.push((odd[i - 1]! * square) % n);
  let result = 1n;
  for (let i = 0; i < bits.length; ) {
    if (bits[i] === '0') {
      result = (result * result) % n;
      i++;
      continue;
    }
    let end = Math.min(i + w, bits.length);
    while (bits[end - 1] === '0') end--; // a window ends in a 1-bit
    for (let k = i; k < end; k++) result = (result * result) % n;
    result = (result * odd[(parseInt(bits.slice(i, end), 2) - 1) >> 1]!) % n;
    i = end;
  }
  return result;
}

/** Greatest common divisor, always >= 0; gcd(0, 0) = 0. Euclid's algorithm, variable-time. */
export function gcd(a: bigint, b: bigint): bigint {
  if (typeof a !== 'bigint' || typeof b !== 'bigint') {
    throw new TypeError(`gcd: expected bigints, got ${typeof a} and ${typeof b}`);
  }
  let x = a < 0n ? -a : a;
  let y = b < 0n ? -b : b;
  while (y !== 0n) [x, y] = [y, x % y];
  return x;
}

/**
 * The inverse of a modulo n (n >= 2), in [1, n). Extended Euclid, variable-time. Throws
 * RangeError when gcd(a, n) != 1; the result is multiplied back and checked before it is returned.
 */
export function modInverse(a: bigint, n: bigint): bigint {
  checkModulus('modInverse', n);
  if (typeof a !== 'bigint') throw new TypeError(`modInverse: expected bigint a, got ${typeof a}`);
  if (n < 2n) throw new RangeError(`modInverse: expected modulus >= 2, got ${n}`);
  let [r0, r1] = [n, mod(a, n)];
  let [t0, t1] = [0n, 1n];
  while (r1 !== 0n) {
    const q = r0 / r1;
    [r0, r1] = [r1, r0 - q * r1];
    [t0, t1] = [t1, t0 - q * t1];
  }
  if (r0 !== 1n) throw new RangeError(`modInverse: expected a coprime to the modulus, got gcd ${r0}`);
  const inv = mod(t0, n);
  if ((mod(a, n) * inv) % n !== 1n) throw new RangeError('modInverse: internal check failed, a * inverse != 1');
  return inv;
}
