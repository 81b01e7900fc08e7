import { pbkdf2Sync, scryptSync } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { constantTimeEqual } from '../../api/auth/constant-time.ts';
import { hashPassword, pbkdf2Sha256, SCRYPT_COST, scryptHash, UNKNOWN_USER_HASH, verifyPassword } from '../../api/auth/password-hash.ts';
import { base64UrlDecode, base64UrlEncode, hex } from '../../api/auth/secrets.ts';
import pbkdf2Vectors from '../vectors/rfc7914-section-11-pbkdf2-hmac-sha256.json';
import scryptVectors from '../vectors/rfc7914-section-12-scrypt.json';
import { withHostedPbkdf2Cap } from './hosted-pbkdf2-cap.ts';

const utf8 = (s: string) => new TextEncoder().encode(s);
/** A cheap cost for tests of the format and comparison logic, which do not depend on it. */
const CHEAP = { logN: 10, r: 8, p: 1 };

describe('scrypt in workerd (RFC 7914)', () => {
  it.each(scryptVectors.vectors)('matches RFC 7914 section 12: P="$password" S="$salt" N=$N r=$r p=$p', async (v) => {
    const dk = await scryptHash(utf8(v.password), utf8(v.salt), { logN: Math.log2(v.N), r: v.r, p: v.p }, v.dkLen);
    expect(hex(dk)).toBe(v.dk);
  });

  it('stores scrypt$14$8$5$salt$hash, as node:crypto scryptSync (OpenSSL, an outside reference) computes it', async () => {
    const password = 'correct horse, invented for this test';
    const stored = await hashPassword(password);
    const [scheme, logN, r, p, salt, hash] = stored.split('$');
    expect([scheme, logN, r, p]).toEqual(['scrypt', '14', '8', '5']);
    expect(base64UrlDecode(salt!).length).toBe(16);
    const reference = scryptSync(password, base64UrlDecode(salt!), 32, { N: 2 ** 14, r: 8, p: 5, maxmem: 64 * 2 ** 20 });
    expect(hex(base64UrlDecode(hash!))).toBe(reference.toString('hex'));
    expect(await verifyPassword(password, stored)).toEqual({ ok: true, needsRehash: false });
  });

  it('uses one of the OWASP scrypt sets, the one of least memory at their common strength (N = 2^14, r = 8, p = 5: 16 MiB)', () => {
    // OWASP Password Storage Cheat Sheet, scrypt: N=2^17 r=8 p=1, 2^16 8 2, 2^15 8 3, 2^14 8 5, 2^13 8 10 (recalled from memory).
    expect(SCRYPT_COST).toEqual({ logN: 14, r: 8, p: 5 });
    expect(128 * 2 ** SCRYPT_COST.logN * SCRYPT_COST.r).toBe(16 * 2 ** 20);
  });

  it('salts every hash afresh, verifies only the right password, and asks to rehash a cheaper one', async () => {
    const a = await hashPassword('same password', CHEAP);
    const b = await hashPassword('same password', CHEAP);
    expect(a).not.toBe(b);
    expect(await verifyPassword('same password', a)).toEqual({ ok: true, needsRehash: true });
    expect((await verifyPassword('same passworD', a)).ok).toBe(false);
    expect((await verifyPassword('', a)).ok).toBe(false);
  });

  it('refuses malformed stored hashes and costs that could stall a sign-in, instead of guessing', async () => {
    const salt = base64UrlEncode(new Uint8Array(16));
    for (const bad of [
      '',
      'plain',
      `scrypt$14$8$5$${salt}`,
      `scrypt$30$8$1$${salt}$AA`, // 2^30 * 8 * 128 bytes: 1 TiB
      `scrypt$14$8$0$${salt}$AA`,
      `scrypt$1e1$8$5$${salt}$AA`,
      'pbkdf2-sha256$0$AA$AA',
      'pbkdf2-sha1$1000$AA$AA',
      'pbkdf2-sha256$99999999999$AA$AA',
      'pbkdf2-sha256$1000$A+/$AA',
    ]) {
      await expect(verifyPassword('x', bad), bad).rejects.toThrow();
    }
  });

  it('checks an unknown email against a hash of today\'s cost, so it takes a wrong password\'s time', async () => {
    expect(UNKNOWN_USER_HASH.startsWith(`scrypt$${SCRYPT_COST.logN}$${SCRYPT_COST.r}$${SCRYPT_COST.p}$`)).toBe(true);
    expect(await verifyPassword('anything', UNKNOWN_USER_HASH)).toEqual({ ok: false, needsRehash: false });
  });

  it('compares bytes fully: equal only when every byte and the length agree', () => {
    expect(constantTimeEqual(new Uint8Array([1, 2, 3]), new Uint8Array([1, 2, 3]))).toBe(true);
    expect(constantTimeEqual(new Uint8Array([1, 2, 3]), new Uint8Array([1, 2, 4]))).toBe(false);
    expect(constantTimeEqual(new Uint8Array([0, 2, 3]), new Uint8Array([1, 2, 3]))).toBe(false);
    expect(constantTimeEqual(new Uint8Array([1, 2]), new Uint8Array([1, 2, 3]))).toBe(false);
  });
});

describe('PBKDF2-HMAC-SHA256, for hashes made before scrypt', () => {
  it.each(pbkdf2Vectors.vectors)('matches RFC 7914 section 11: P=$password S=$salt c=$iterations', async (v) => {
    expect(hex(await pbkdf2Sha256(utf8(v.password), utf8(v.salt), v.iterations, v.dkLen))).toBe(v.dk);
  });

  it('verifies an old 600,000-iteration hash where the runtime refuses PBKDF2 above 100,000 (pure-JS PBKDF2), and asks to replace it', async () => {
    const salt = crypto.getRandomValues(new Uint8Array(16));
    // node:crypto pbkdf2Sync (OpenSSL): an outside reference for the old hash.
    const old = `pbkdf2-sha256$600000$${base64UrlEncode(salt)}$${base64UrlEncode(pbkdf2Sync('an old password', salt, 600_000, 32, 'sha256'))}`;
    await withHostedPbkdf2Cap(async (refused) => {
      expect(await verifyPassword('an old password', old)).toEqual({ ok: true, needsRehash: true });
      expect((await verifyPassword('an old passworD', old)).ok).toBe(false);
      expect(refused()).toBe(2); // WebCrypto was asked and refused, as hosted Workers do
    });
  });
});
