import { isProbablePrime } from '../bigint/primes.ts';
import { assembleKeyPair } from './key-check.ts';
import type { PirKeyPair } from './key-pair.ts';
import { ALLOWED_MODULUS_BITS, isAllowedModulusBits } from './params.ts';

/** The stored form of a key pair: lower-case hex strings without prefix, plus a format number. */
export interface PirKeyPairJson {
  format: 1;
  modulusBits: number;
  n: string;
  p: string;
  q: string;
  w: string;
}

/** Key pair to its stored form. The result holds the secret primes: store it like a private key. */
export function keyPairToJson(key: PirKeyPair): PirKeyPairJson {
  return {
    format: 1,
    modulusBits: key.modulusBits,
    n: key.n.toString(16),
    p: key.p.toString(16),
    q: key.q.toString(16),
    w: key.w.toString(16),
  };
}

function hexField(json: Record<string, unknown>, name: string): bigint {
  const v = json[name];
  if (typeof v !== 'string' || !/^[0-9a-f]+$/.test(v)) {
    throw new TypeError(`keyPairFromJson: expected lower-case hex string ${name}, got ${typeof v === 'string' ? JSON.stringify(v.slice(0, 20)) : typeof v}`);
  }
  return BigInt('0x' + v);
}

/** Miller-Rabin rounds for the p and q of a stored key (see keyPairFromJson). */
const STORED_KEY_ROUNDS = 8;

/**
 * Stored form back to a key pair; every invariant of PirKeyPair is re-checked (n = p*q, bit
 * length, an allowed modulus size, w non-residue mod p and q, p and q prime). Throws TypeError
 * for a malformed object and RangeError for values that break an invariant. A composite p or q
 * passes every other check (the Jacobi symbol stands in for the Legendre symbol) and would then
 * decode answers wrongly, so both are tested. A stored key is read on every CLI run and page
 * load, and only its owner can make it composite, so 8 Miller-Rabin rounds (a composite passes
 * with probability at most 4^-8) stand instead of the 64 used when a prime is made.
 */
export function keyPairFromJson(value: unknown): PirKeyPair {
  if (typeof value !== 'object' || value === null) throw new TypeError(`keyPairFromJson: expected object, got ${value === null ? 'null' : typeof value}`);
  const json = value as Record<string, unknown>;
  if (json.format !== 1) throw new RangeError(`keyPairFromJson: expected format 1, got ${String(json.format)}`);
  if (typeof json.modulusBits !== 'number') throw new TypeError(`keyPairFromJson: expected number modulusBits, got ${typeof json.modulusBits}`);
  if (!isAllowedModulusBits(json.modulusBits)) {
    throw new RangeError(`keyPairFromJson: expected modulusBits in ${ALLOWED_MODULUS_BITS.join(', ')}, got ${json.modulusBits}`);
  }
  const key = assembleKeyPair(hexField(json, 'p'), hexField(json, 'q'), json.modulusBits, hexField(json, 'w'));
  if (key.n !== hexField(json, 'n')) throw new RangeError('keyPairFromJson: expected n = p*q, got a different n');
  for (const name of ['p', 'q'] as const) {
    if (!isProbablePrime(key[name], STORED_KEY_ROUNDS)) throw new RangeError(`keyPairFromJson: expected ${name} to be prime, got a composite number`);
  }
  return key;
}
