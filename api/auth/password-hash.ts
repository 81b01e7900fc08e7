import { ApiError } from '../http/api-error.ts';
import { constantTimeEqual } from './constant-time.ts';
import { base64UrlDecode, base64UrlEncode } from './secrets.ts';

/**
 * PBKDF2-HMAC-SHA256 iterations for new password hashes: 600,000, the minimum the OWASP Password
 * Storage Cheat Sheet recommends for PBKDF2-HMAC-SHA256
 * (https://cheatsheetseries.owasp.org/cheatsheets/Password_Storage_Cheat_Sheet.html#pbkdf2).
 * About 0.2 s of CPU per hash in workerd on our 2-core machine.
 */
export const PBKDF2_ITERATIONS = 600_000;
/** 128-bit random salt per user (NIST SP 800-132 asks for at least 128 bits). */
const SALT_BYTES = 16;
/** 256-bit derived key: one SHA-256 block, so one PBKDF2 block of work. */
const HASH_BYTES = 32;
/** Stored hashes naming more iterations than this are refused, so a bad row cannot stall a login. */
const MAX_ITERATIONS = 10_000_000;
const SCHEME = 'pbkdf2-sha256';

/** PBKDF2-HMAC-SHA256 (RFC 8018 section 5.2) through WebCrypto. Variable-time only in the lengths. */
export async function pbkdf2Sha256(password: Uint8Array, salt: Uint8Array, iterations: number, lengthBytes: number): Promise<Uint8Array> {
  if (!Number.isSafeInteger(iterations) || iterations < 1) throw new RangeError(`pbkdf2Sha256: expected iterations >= 1, got ${iterations}`);
  if (!Number.isSafeInteger(lengthBytes) || lengthBytes < 1) throw new RangeError(`pbkdf2Sha256: expected a length >= 1, got ${lengthBytes}`);
  const key = await crypto.subtle.importKey('raw', password as Uint8Array<ArrayBuffer>, 'PBKDF2', false, ['deriveBits']);
  try {
    const bits = await crypto.subtle.deriveBits({ name: 'PBKDF2', hash: 'SHA-256', salt: salt as Uint8Array<ArrayBuffer>, iterations }, key, lengthBytes * 8);
    return new Uint8Array(bits);
  } catch (err) {
    // Hosted Workers have capped PBKDF2 iterations (workerd issue 1346): say so, never hash weaker.
    if (err instanceof Error && err.name === 'NotSupportedError') {
      throw new ApiError(503, 'password_hashing_unavailable', `passwords cannot be checked here: this runtime refuses PBKDF2 at ${iterations} iterations (${err.message}); nearveil does not hash with fewer`);
    }
    throw err;
  }
}

/** A new stored hash "pbkdf2-sha256$<iterations>$<salt b64url>$<hash b64url>" with a fresh random salt. */
export async function hashPassword(password: string, iterations = PBKDF2_ITERATIONS): Promise<string> {
  const salt = crypto.getRandomValues(new Uint8Array(SALT_BYTES));
  const hash = await pbkdf2Sha256(new TextEncoder().encode(password), salt, iterations, HASH_BYTES);
  return [SCHEME, String(iterations), base64UrlEncode(salt), base64UrlEncode(hash)].join('$');
}

export interface PasswordCheck {
  ok: boolean;
  /** True when the stored hash used fewer iterations than today's: hash again after a good sign-in. */
  needsRehash: boolean;
}

/**
 * Checks a password against a stored hash, comparing the hashes in constant time. A malformed
 * stored hash throws (it is a server fault, not the caller's).
 */
export async function verifyPassword(password: string, stored: string): Promise<PasswordCheck> {
  const parts = stored.split('$');
  const iterations = Number(parts[1]);
  if (parts.length !== 4 || parts[0] !== SCHEME || !/^\d+$/.test(parts[1]!) || iterations < 1 || iterations > MAX_ITERATIONS) {
    throw new Error(`verifyPassword: stored hash is not ${SCHEME}$<iterations>$<salt>$<hash>`);
  }
  const salt = base64UrlDecode(parts[2]!);
  const expected = base64UrlDecode(parts[3]!);
  const actual = await pbkdf2Sha256(new TextEncoder().encode(password), salt, iterations, expected.length);
  return { ok: constantTimeEqual(actual, expected), needsRehash: iterations < PBKDF2_ITERATIONS };
}

/**
 * A well-formed hash of no one's password, checked when the email is unknown, so an unknown
 * email costs the same time as a wrong password and the answer does not tell them apart.
 */
export const UNKNOWN_USER_HASH = `${SCHEME}$${PBKDF2_ITERATIONS}$AAAAAAAAAAAAAAAAAAAAAA$${'A'.repeat(43)}`;
