/**
 * Modular arithmetic in plain BigInt, written out here so tests check the product's answers with
 * code that shares nothing with it (square-and-multiply and the extended Euclidean algorithm,
 * common practice; from memory).
 */
export function plainModPow(base: bigint, exponent: bigint, modulus: bigint): bigint {
  let result = 1n;
  let b = ((base % modulus) + modulus) % modulus;
  for (let e = exponent; e > 0n; e >>= 1n) {
    if (e & 1n) result = (result * b) % modulus;
    b = (b * b) % modulus;
  }
  return result % modulus;
}

/** a^-1 mod m by the extended Euclidean algorithm; throws when gcd(a, m) != 1. */
export function plainModInverse(a: bigint, m: bigint): bigint {
  let [oldR, r] = [((a % m) + m) % m, m];
  let [oldS, s] = [1n, 0n];
  while (r !== 0n) {
    const quotient = oldR / r;
    [oldR, r] = [r, oldR - quotient * r];
    [oldS, s] = [s, oldS - quotient * s];
  }
  if (oldR !== 1n) throw new RangeError('plainModInverse: not a unit');
  return ((oldS % m) + m) % m;
}

/** Euler's criterion for an odd prime p and a unit a: a^((p-1)/2) = 1 exactly for a square. */
export function isSquareModPrime(a: bigint, p: bigint): boolean {
  return plainModPow(a, (p - 1n) / 2n, p) === 1n;
}
