import { env } from 'cloudflare:test';
import { pbkdf2Sync } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { base64UrlEncode } from '../../api/auth/secrets.ts';
import { withHostedPbkdf2Cap } from './hosted-pbkdf2-cap.ts';
import { createTestTenant } from './tenant-fixture.ts';
import { createTestUser, jsonRequest, signIn, signInRequest } from './user-fixture.ts';

const storedHash = async (email: string) => (await env.DB.prepare('SELECT password_hash FROM users WHERE email = ?').bind(email).first<{ password_hash: string }>())!.password_hash;

// Hosted Workers refuse PBKDF2 above 100,000 iterations (workerd issue 1346); the local runtime
// does not, so the refusal is stubbed here as they give it. Sign-in, password change and new
// users must all work under it.
describe('the session flow where WebCrypto refuses PBKDF2 above 100,000 iterations, as hosted Workers do', () => {
  it('signs in with a hash made before scrypt (PBKDF2, 600,000 iterations), replaces it with scrypt, and signs in again', async () => {
    const t = await createTestTenant();
    const id = crypto.randomUUID();
    const email = `legacy-${id.slice(0, 8)}@example.test`;
    const salt = crypto.getRandomValues(new Uint8Array(16));
    // The old stored form, computed by node:crypto pbkdf2Sync (OpenSSL): an outside reference.
    const legacy = `pbkdf2-sha256$600000$${base64UrlEncode(salt)}$${base64UrlEncode(pbkdf2Sync('a password from before', salt, 600_000, 32, 'sha256'))}`;
    await env.DB.prepare('INSERT INTO users (id, tenant_id, email, role, password_hash) VALUES (?, ?, ?, ?, ?)').bind(id, t.tenantId, email, 'tenant_editor', legacy).run();
    await withHostedPbkdf2Cap(async (refused) => {
      expect((await signInRequest(email, 'a password from before')).status).toBe(200);
      expect(refused()).toBe(1);
      expect(await storedHash(email)).toMatch(/^scrypt\$14\$8\$5\$[A-Za-z0-9_-]{22}\$[A-Za-z0-9_-]{43}$/);
      expect((await signInRequest(email, 'a password from before')).status).toBe(200);
      expect((await signInRequest(email, 'a password from beforE')).status).toBe(401);
      expect(refused()).toBe(1); // the new hash never asks WebCrypto for PBKDF2
    });
  });

  it('changes a password and creates a user, each signing in afterwards', async () => {
    const t = await createTestTenant();
    const admin = await createTestUser(t.tenantId, 'tenant_admin');
    await withHostedPbkdf2Cap(async (refused) => {
      const session = await signIn(admin);
      const changed = await jsonRequest(session, 'PUT', '/v1/session/password', { currentPassword: admin.password, newPassword: 'a new password, long enough' });
      expect(changed.status).toBe(204);
      expect((await signInRequest(admin.email, 'a new password, long enough')).status).toBe(200);
      expect((await signInRequest(admin.email, admin.password)).status).toBe(401);
      const made = await jsonRequest(await signIn({ email: admin.email, password: 'a new password, long enough' }), 'POST', '/v1/admin/users', {
        email: `helper-${crypto.randomUUID().slice(0, 8)}@example.test`,
        role: 'tenant_editor',
        password: 'a helper password, long enough',
      });
      expect(made.status).toBe(201);
      const helper = (await made.json()) as { email: string };
      expect((await signInRequest(helper.email, 'a helper password, long enough')).status).toBe(200);
      expect(await storedHash(helper.email)).toMatch(/^scrypt\$14\$8\$5\$/);
      expect(refused()).toBe(0);
    });
  });
});
