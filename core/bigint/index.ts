export { bitLength } from './bit-length.ts';
export { bigintToBytes, bytesToBigint } from './bytes.ts';
export { jacobi, legendre } from './jacobi.ts';
export { gcd, mod, modInverse, modPow } from './modular.ts';
export { DEFAULT_MILLER_RABIN_ROUNDS, isProbablePrime, randomPrime, SMALL_PRIMES } from './primes.ts';
export { randomBelow, randomBits, randomUnit } from './random.ts';
