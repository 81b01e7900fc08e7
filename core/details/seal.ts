import { InputError } from '../errors/input-error.ts';

/**
 * Sealing of one record: AES-128-GCM through WebCrypto (global in Node 20, Workers, browsers),
 * each record under its own 128-bit key, 16-byte tag appended to the ciphertext.
 *
 * Keys: HMAC-SHA256(version secret, label || site index || record)[0..16) (RFC 2104). The
 * version secret is 32 bytes from a CSPRNG, kept server-side only; HMAC is a PRF, so keys look
 * uniform to anyone without it, and the same table and secret give the same bytes (builds stay
 * deterministic). The record itself enters the derivation, so one key never seals two different
 * records; the IV can then be fixed (NIST SP 800-38D, 8.2: an IV must never repeat under one
 * key, and each key here seals exactly one message).
 * Associated data: label || site index, so a sealed record moved to another index is refused.
 */
export const RECORD_KEY_BYTES = 16;
export const GCM_TAG_BYTES = 16;
export const DETAILS_SECRET_BYTES = 32;

const ascii = new TextEncoder();
const KEY_LABEL = ascii.encode('nearveil record key 1\0');
const AAD_LABEL = ascii.encode('nearveil record 1\0');
const FIXED_IV = new Uint8Array(12);

function withIndex(label: Uint8Array, index: number, tail?: Uint8Array): Uint8Array<ArrayBuffer> {
  if (!Number.isSafeInteger(index) || index < 0 || index > 0xffffffff) throw new RangeError(`record index: expected 0 <= index < 2^32, got ${index}`);
  const out = new Uint8Array(label.length + 4 + (tail?.length ?? 0));
  out.set(label);
  new DataView(out.buffer).setUint32(label.length, index);
  if (tail) out.set(tail, label.length + 4);
  return out;
}

/** Imports a version secret for key derivation. RangeError unless it is DETAILS_SECRET_BYTES long. */
export async function importDetailsSecret(secret: Uint8Array): Promise<CryptoKey> {
  if (!(secret instanceof Uint8Array) || secret.length !== DETAILS_SECRET_BYTES) {
    throw new RangeError(`importDetailsSecret: expected ${DETAILS_SECRET_BYTES} bytes, got ${secret?.length}`);
  }
  return crypto.subtle.importKey('raw', Uint8Array.from(secret), { name: 'HMAC', hash: 'SHA-256' }, false, ['sign']);
}

/** The record key of site `index` holding `record` (its padded plaintext). */
export async function deriveRecordKey(secret: CryptoKey, index: number, record: Uint8Array): Promise<Uint8Array<ArrayBuffer>> {
  const mac = await crypto.subtle.sign('HMAC', secret, withIndex(KEY_LABEL, index, record));
  return new Uint8Array(mac, 0, RECORD_KEY_BYTES).slice();
}

async function aesKey(key: Uint8Array, use: 'encrypt' | 'decrypt'): Promise<CryptoKey> {
  if (!(key instanceof Uint8Array) || key.length !== RECORD_KEY_BYTES) {
    throw new RangeError(`record key: expected ${RECORD_KEY_BYTES} bytes, got ${key?.length}`);
  }
  return crypto.subtle.importKey('raw', Uint8Array.from(key), { name: 'AES-GCM' }, false, [use]);
}

/** AES-128-GCM encryption (NIST SP 800-38D) with a 128-bit tag: ciphertext || tag. */
export async function aesGcmSeal(key: Uint8Array, iv: Uint8Array, aad: Uint8Array, plaintext: Uint8Array): Promise<Uint8Array<ArrayBuffer>> {
  const params = { name: 'AES-GCM', iv: Uint8Array.from(iv), additionalData: Uint8Array.from(aad), tagLength: 128 };
  return new Uint8Array(await crypto.subtle.encrypt(params, await aesKey(key, 'encrypt'), Uint8Array.from(plaintext)));
}

/** AES-128-GCM decryption of ciphertext || tag; null when the tag does not verify. */
export async function aesGcmOpen(key: Uint8Array, iv: Uint8Array, aad: Uint8Array, sealed: Uint8Array): Promise<Uint8Array<ArrayBuffer> | null> {
  const params = { name: 'AES-GCM', iv: Uint8Array.from(iv), additionalData: Uint8Array.from(aad), tagLength: 128 };
  const cryptoKey = await aesKey(key, 'decrypt');
  try {
    return new Uint8Array(await crypto.subtle.decrypt(params, cryptoKey, Uint8Array.from(sealed)));
  } catch {
    return null;
  }
}

/** The associated data of site `index`'s record. */
export function recordAad(index: number): Uint8Array<ArrayBuffer> {
  return withIndex(AAD_LABEL, index);
}

/** AES-128-GCM of `record` under `key` (fixed IV, index as associated data): ciphertext || tag. */
export async function sealRecord(key: Uint8Array, index: number, record: Uint8Array): Promise<Uint8Array<ArrayBuffer>> {
  return aesGcmSeal(key, FIXED_IV, recordAad(index), record);
}

/**
 * Opens a sealed record. A changed byte, a record moved to another index or a wrong key fails
 * the tag check: InputError `record_refused` (field `sealed`), never a wrong record.
 */
export async function unsealRecord(key: Uint8Array, index: number, sealed: Uint8Array): Promise<Uint8Array<ArrayBuffer>> {
  if (!(sealed instanceof Uint8Array) || sealed.length < GCM_TAG_BYTES) {
    throw new RangeError(`unsealRecord: expected at least ${GCM_TAG_BYTES} bytes, got ${sealed?.length}`);
  }
  const opened = await aesGcmOpen(key, FIXED_IV, recordAad(index), sealed);
  if (opened === null) {
    throw new InputError('record_refused', 'sealed', `unsealRecord: the sealed record of site index ${index} fails its authentication tag (changed, moved or a wrong key); refused`, { status: 422 });
  }
  return opened;
}
