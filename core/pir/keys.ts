import { bytesToBigint } from '../bigint/bytes.ts';
import { legendre } from '../bigint/jacobi.ts';
import { randomPrime } from '../bigint/primes.ts';
import { randomUnit } from '../bigint/random.ts';
import { assembleKeyPair } from './key-check.ts';
import { partnerPrime } from './low-ones-modulus.ts';
import { ALLOWED_MODULUS_BITS, DEFAULT_MODULUS_BITS, isAllowedModulusBits } from './params.ts';

export type { PirKeyPair } from './key-pair.ts';
import type { PirKeyPair } from './key-pair.ts';

export interface GenerateKeyPairOptions {
  /** One of ALLOWED_MODULUS_BITS; DEFAULT_MODULUS_BITS when absent. */
  modulusBits?: number;
  /** 'webcrypto' (default): primes from the platform's RSA key generation; 'own': randomPrime. */
  method?: 'webcrypto' | 'own';
  /**
   * true (default): n's low lowOnesBits(modulusBits) bits are all ones (core/pir/low-ones-modulus.ts),
   * which lets the server answer with about a quarter fewer products; false: p and q unconstrained.
   */
  lowOnes?: boolean;
}

/**
 * A fresh key pair. 'webcrypto' asks crypto.subtle for an RSASSA-PKCS1-v1_5 key of the given
 * length and reads p and q from its JWK export; 'own' draws two primes with randomPrime (much
 * slower in BigInt). With lowOnes (the default) only p is kept and q is partnerPrime(p), the prime
 * that makes n's low half all ones. Either way n = p*q, p != q and the exact bit length are checked.
 * Throws RangeError for a modulus size outside ALLOWED_MODULUS_BITS or an unknown method.
 * Variable-time (runs on the client only).
 */
export async function generateKeyPair(options: GenerateKeyPairOptions = {}): Promise<PirKeyPair> {
  const modulusBits = options.modulusBits ?? DEFAULT_MODULUS_BITS;
  const method = options.method ?? 'webcrypto';
  if (!isAllowedModulusBits(modulusBits)) {
    throw new RangeError(`generateKeyPair: expected modulusBits in ${ALLOWED_MODULUS_BITS.join(', ')}, got ${modulusBits}`);
  }
  if (method !== 'webcrypto' && method !== 'own') {
    throw new RangeError(`generateKeyPair: expected method 'webcrypto' or 'own', got ${String(method)}`);
  }
  const primes = async (): Promise<[bigint, bigint]> => {
    if (method === 'webcrypto') return primesFromWebCrypto(modulusBits);
    const p = randomPrime(modulusBits / 2);
    let q: bigint;
    do q = randomPrime(modulusBits / 2);
    while (q === p);
    return [p, q];
  };
  let [p, q] = await primes();
  if (options.lowOnes ?? true) {
    for (;;) {
      const partner = partnerPrime(p, modulusBits);
      if (partner !== null) {
        q = partner;
        break;
      }
      [p] = await primes();
    }
  }
  return assembleKeyPair(p, q, modulusBits, findNonResidue(p, q));
}

async function primesFromWebCrypto(modulusBits: number): Promise<[bigint, bigint]> {
  const pair = (await globalThis.crypto.subtle.generateKey(
    { name: 'RSASSA-PKCS1-v1_5', modulusLength: modulusBits, publicExponent: new Uint8Array([1, 0, 1]), hash: 'SHA-256' },
    true,
    ['sign', 'verify'],
  )) as CryptoKeyPair;
  const jwk = (await globalThis.crypto.subtle.exportKey('jwk', pair.privateKey)) as JsonWebKey;
  if (typeof jwk.p !== 'string' || typeof jwk.q !== 'string') {
    throw new TypeError('generateKeyPair: expected p and q in the exported JWK, got none');
  }
  return [bytesToBigint(base64UrlToBytes(jwk.p)), bytesToBigint(base64UrlToBytes(jwk.q))];
}

/** base64url (RFC 4648 section 5, no padding) to bytes, via atob (present in every target runtime). */
function base64UrlToBytes(text: string): Uint8Array {
  const b64 = text.replace(/-/g, '+').replace(/_/g, '/').padEnd(Math.ceil(text.length / 4) * 4, '=');
  const bin = atob(b64);
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

/**
 * A uniform random w in [1, p*q) that is a non-residue modulo both p and q (Legendre -1 twice),
 * hence Jacobi(w, p*q) = +1. Expected four draws. Requires distinct odd primes p, q (primality
 * is the caller's promise); throws RangeError when p or q is even or < 3, or p = q.
 * Variable-time.
 */
export function findNonResidue(p: bigint, q: bigint): bigint {
  if (typeof p !== 'bigint' || typeof q !== 'bigint') {
    throw new TypeError(`findNonResidue: expected bigints, got ${typeof p} and ${typeof q}`);
  }
  if (p < 3n || q < 3n || (p & 1n) === 0n || (q & 1n) === 0n || p === q) {
    throw new RangeError(`findNonResidue: expected distinct odd primes, got p=${p}, q=${q}`);
  }
  const n = p * q;
  for (;;) {
    const w = randomUnit(n);
    if (legendre(w, p) === -1 && legendre(w, q) === -1) return w;
  }
}

export { keyPairFromJson, keyPairToJson, type PirKeyPairJson } from './key-json.ts';
export { assembleKeyPair } from './key-check.ts';
