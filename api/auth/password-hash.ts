import { pbkdf2Async } from '@noble/hashes/pbkdf2.js';
import { scryptAsync } from '@noble/hashes/scrypt.js';
import { sha256 } from '@noble/hashes/sha2.js';
import { ApiError } from '../http/api-error.ts';
import { constantTimeEqual } from './constant-time.ts';
import { base64UrlDecode, base64UrlEncode } from './secrets.ts';

/**
 * Password hashing that the hosted runtime accepts: scrypt (RFC 7914) with N = 2^14, r = 8, p = 5,
 * one of the parameter sets the OWASP Password Storage Cheat Sheet lists as equivalent
 * (https://cheatsheetseries.owasp.org/cheatsheets/Password_Storage_Cheat_Sheet.html#scrypt).
 * Why scrypt and this set: hosted Workers refuse PBKDF2 above 100,000 iterations (workerd issue
 * 1346), below OWASP's 600,000; Argon2id in pure JS is slower and its @noble/hashes module is not
 * audited, while scrypt there is; among OWASP's scrypt sets this one needs 16 MiB (128 * N * r
 * bytes), which leaves room in a 128 MB isolate. Time and memory: `npm run bench`.
 */
export interface ScryptCost {
  /** log2 of N, the CPU and memory cost. */
  logN: number;
  r: number;
  p: number;
}
export const SCRYPT_COST: ScryptCost = { logN: 14, r: 8, p: 5 };
/** 128-bit random salt per user (NIST SP 800-132 asks for at least 128 bits). */
const SALT_BYTES = 16;
/** 256-bit derived key. */
const HASH_BYTES = 32;
/** Stored costs above these are refused, so a bad row cannot stall a sign-in or exhaust memory. */
const MAX_LOG_N = 16;
const MAX_R = 16;
const MAX_P = 16;
/** Hashes made before scrypt: verified (once, then replaced at that sign-in), never made. */
const MAX_PBKDF2_ITERATIONS = 10_000_000;
/** The most PBKDF2 iterations hosted WebCrypto computes; above it the pure-JS PBKDF2 does. */
const WEBCRYPTO_PBKDF2_CAP = 100_000;

/**
 * A stored hash names its algorithm and parameters, so the work factor can grow:
 *   scrypt$<log2 N>$<r>$<p>$<salt, base64url>$<hash, base64url>
 *   pbkdf2-sha256$<iterations>$<salt>$<hash>   (earlier hashes; PBKDF2-HMAC-SHA256, RFC 8018)
 */
const SCRYPT = 'scrypt';
const PBKDF2 = 'pbkdf2-sha256';

/**
 * scrypt through @noble/hashes (pure JS, audited; 128 * N * r bytes of memory). One hash at a time
 * per isolate, so concurrent sign-ins queue instead of each holding N * r * 128 bytes; the hash
 * yields to other requests every 50 ms where timers run (locally; hosted Workers freeze
 * timers during CPU work, so there it runs through).
 */
export function scryptHash(password: Uint8Array, salt: Uint8Array, cost: ScryptCost, lengthBytes: number): Promise<Uint8Array> {
  checkScryptCost(cost);
  const run = () => scryptAsync(password, salt, { N: 2 ** cost.logN, r: cost.r, p: cost.p, dkLen: lengthBytes, asyncTick: 50 });
  const result = queue.then(run, run);
  queue = result.then(
    () => undefined,
    () => undefined,
  );
  return result;
}
let queue: Promise<unknown> = Promise.resolve();

function checkScryptCost(cost: ScryptCost): void {
  const { logN, r, p } = cost;
  if (![logN, r, p].every(Number.isSafeInteger) || logN < 1 || logN > MAX_LOG_N || r < 1 || r > MAX_R || p < 1 || p > MAX_P) {
    throw new RangeError(`scrypt: expected log2 N in 1..${MAX_LOG_N}, r in 1..${MAX_R} and p in 1..${MAX_P}, got ${JSON.stringify(cost)}`);
  }
}

/**
 * PBKDF2-HMAC-SHA256 (RFC 8018 section 5.2): WebCrypto where the runtime allows the count, the
 * pure-JS @noble/hashes PBKDF2 where it refuses it (hosted Workers above 100,000 iterations).
 */
export async function pbkdf2Sha256(password: Uint8Array, salt: Uint8Array, iterations: number, lengthBytes: number): Promise<Uint8Array> {
  if (!Number.isSafeInteger(iterations) || iterations < 1) throw new RangeError(`pbkdf2Sha256: expected iterations >= 1, got ${iterations}`);
  if (!Number.isSafeInteger(lengthBytes) || lengthBytes < 1) throw new RangeError(`pbkdf2Sha256: expected a length >= 1, got ${lengthBytes}`);
  const key = await crypto.subtle.importKey('raw', password as Uint8Array<ArrayBuffer>, 'PBKDF2', false, ['deriveBits']);
  try {
    return new Uint8Array(await crypto.subtle.deriveBits({ name: 'PBKDF2', hash: 'SHA-256', salt: salt as Uint8Array<ArrayBuffer>, iterations }, key, lengthBytes * 8));
  } catch (err) {
    if (!(err instanceof Error && err.name === 'NotSupportedError' && iterations > WEBCRYPTO_PBKDF2_CAP)) throw err;
    return pbkdf2Async(sha256, password, salt, { c: iterations, dkLen: lengthBytes, asyncTick: 50 });
  }
}

/** A new stored hash with a fresh random salt (SCRYPT_COST unless a test asks for a cheaper one). */
export async function hashPassword(password: string, cost: ScryptCost = SCRYPT_COST): Promise<string> {
  const salt = crypto.getRandomValues(new Uint8Array(SALT_BYTES));
  const hash = await hashOrUnavailable(() => scryptHash(new TextEncoder().encode(password), salt, cost, HASH_BYTES));
  return [SCRYPT, String(cost.logN), String(cost.r), String(cost.p), base64UrlEncode(salt), base64UrlEncode(hash)].join('$');
}

export interface PasswordCheck {
  ok: boolean;
  /** True when the stored hash is PBKDF2 or cheaper than SCRYPT_COST: hash again after a good sign-in. */
  needsRehash: boolean;
}

/**
 * Checks a password against a stored hash of either form, comparing in constant time. A malformed
 * stored hash throws (it is a server fault, not the caller's).
 */
export async function verifyPassword(password: string, stored: string): Promise<PasswordCheck> {
  const parts = stored.split('$');
  const utf8 = new TextEncoder().encode(password);
  const numbers = (from: number, to: number) => parts.slice(from, to).map((x) => (/^\d{1,9}$/.test(x) ? Number(x) : Number.NaN));
  if (parts[0] === SCRYPT && parts.length === 6) {
    const [logN, r, p] = numbers(1, 4) as [number, number, number];
    const cost = { logN, r, p };
    try {
      checkScryptCost(cost);
    } catch {
      throw new Error(`verifyPassword: stored scrypt hash has unusable parameters ${parts.slice(1, 4).join('$')}`);
    }
    const [salt, expected] = [base64UrlDecode(parts[4]!), base64UrlDecode(parts[5]!)];
    const actual = await hashOrUnavailable(() => scryptHash(utf8, salt, cost, expected.length));
    return { ok: constantTimeEqual(actual, expected), needsRehash: weaker(cost, SCRYPT_COST) };
  }
  if (parts[0] === PBKDF2 && parts.length === 4) {
    const [iterations] = numbers(1, 2) as [number];
    if (!(iterations >= 1 && iterations <= MAX_PBKDF2_ITERATIONS)) throw new Error(`verifyPassword: stored PBKDF2 hash has unusable iterations ${parts[1]}`);
    const [salt, expected] = [base64UrlDecode(parts[2]!), base64UrlDecode(parts[3]!)];
    const actual = await hashOrUnavailable(() => pbkdf2Sha256(utf8, salt, iterations, expected.length));
    return { ok: constantTimeEqual(actual, expected), needsRehash: true };
  }
  throw new Error(`verifyPassword: stored hash is neither ${SCRYPT}$<log2 N>$<r>$<p>$<salt>$<hash> nor ${PBKDF2}$<iterations>$<salt>$<hash>`);
}

function weaker(a: ScryptCost, b: ScryptCost): boolean {
  return 2 ** a.logN * a.r * a.p < 2 ** b.logN * b.r * b.p || 2 ** a.logN * a.r < 2 ** b.logN * b.r;
}

/** A runtime that cannot hash (out of memory, a refused primitive) answers 503, never a weaker hash. */
async function hashOrUnavailable(hash: () => Promise<Uint8Array>): Promise<Uint8Array> {
  try {
    return await hash();
  } catch (err) {
    if (err instanceof RangeError || err instanceof ApiError) throw err;
    throw new ApiError(503, 'password_hashing_unavailable', `passwords cannot be checked here: ${err instanceof Error ? err.message : String(err)}`);
  }
}

/**
 * A well-formed hash of no one's password at today's cost, checked when the email is unknown, so
 * an unknown email costs the same time as a wrong password and the answer does not tell them apart.
 */
export const UNKNOWN_USER_HASH = `${SCRYPT}$${SCRYPT_COST.logN}$${SCRYPT_COST.r}$${SCRYPT_COST.p}$AAAAAAAAAAAAAAAAAAAAAA$${'A'.repeat(43)}`;
