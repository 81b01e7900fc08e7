import { pbkdf2Sync } from 'node:crypto';
import { describe, expect, it, vi } from 'vitest';
import { constantTimeEqual } from '../../api/auth/constant-time.ts';
import { hashPassword, PBKDF2_ITERATIONS, pbkdf2Sha256, verifyPassword } from '../../api/auth/password-hash.ts';
import { base64UrlDecode, hex } from '../../api/auth/secrets.ts';
import rfc7914 from '../vectors/rfc7914-section-11-pbkdf2-hmac-sha256.json';

const utf8 = (s: string) => new TextEncoder().encode(s);

describe('PBKDF2-HMAC-SHA256 through WebCrypto in workerd', () => {
  // Published vectors: RFC 7914 section 11 (also reproduced with Node's pbkdf2Sync while writing them down).
  it.each(rfc7914.vectors)('matches RFC 7914 section 11: P=$password S=$salt c=$iterations', async (v) => {
    const dk = await pbkdf2Sha256(utf8(v.password), utf8(v.salt), v.iterations, v.dkLen);
    expect(hex(dk)).toBe(v.dk);
  });

  it('matches node:crypto pbkdf2Sync (outside reference) at the stored work factor', async () => {
    const password = 'correct horse, invented for this test';
    const stored = await hashPassword(password);
    const [scheme, iterations, salt, hash] = stored.split('$');
    expect(scheme).toBe('pbkdf2-sha256');
    expect(Number(iterations)).toBe(PBKDF2_ITERATIONS);
    expect(base64UrlDecode(salt!).length).toBe(16);
    const reference = pbkdf2Sync(password, base64UrlDecode(salt!), PBKDF2_ITERATIONS, 32, 'sha256');
    expect(hex(base64UrlDecode(hash!))).toBe(reference.toString('hex'));
  });

  it('answers 503 password_hashing_unavailable, never a weaker hash, where the runtime caps PBKDF2', async () => {
    // The message workerd gives when its cap is lower than the count asked for (workerd issue 1346).
    const spy = vi.spyOn(crypto.subtle, 'deriveBits').mockRejectedValueOnce(new DOMException('Pbkdf2 failed: iteration counts above 100000 are not supported (requested 600000).', 'NotSupportedError'));
    try {
      await expect(hashPassword('a password for the capped runtime')).rejects.toMatchObject({ status: 503, code: 'password_hashing_unavailable' });
    } finally {
      spy.mockRestore();
    }
  });

  it('keeps the OWASP minimum of 600,000 iterations', () => {
    expect(PBKDF2_ITERATIONS).toBeGreaterThanOrEqual(600_000);
  });

  it('salts every hash afresh and verifies only the right password', async () => {
    // Cheap iteration counts here: the salt and comparison logic do not depend on the count.
    const a = await hashPassword('same password', 1000);
    const b = await hashPassword('same password', 1000);
    expect(a).not.toBe(b);
    expect(await verifyPassword('same password', a)).toEqual({ ok: true, needsRehash: true });
    expect((await verifyPassword('same passworD', a)).ok).toBe(false);
    expect((await verifyPassword('', a)).ok).toBe(false);
  });

  it('refuses malformed stored hashes instead of guessing', async () => {
    for (const bad of ['', 'plain', 'pbkdf2-sha256$0$AA$AA', 'pbkdf2-sha1$1000$AA$AA', 'pbkdf2-sha256$99999999999$AA$AA', 'pbkdf2-sha256$1000$A+/$AA']) {
      await expect(verifyPassword('x', bad)).rejects.toThrow();
    }
  });

  it('compares bytes fully: equal only when every byte and the length agree', () => {
    expect(constantTimeEqual(new Uint8Array([1, 2, 3]), new Uint8Array([1, 2, 3]))).toBe(true);
    expect(constantTimeEqual(new Uint8Array([1, 2, 3]), new Uint8Array([1, 2, 4]))).toBe(false);
    expect(constantTimeEqual(new Uint8Array([0, 2, 3]), new Uint8Array([1, 2, 3]))).toBe(false);
    expect(constantTimeEqual(new Uint8Array([1, 2]), new Uint8Array([1, 2, 3]))).toBe(false);
  });
});
