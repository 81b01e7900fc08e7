import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { hashSecret } from '../../api/auth/secrets.ts';
import { adminRequest, BASE, createTestTenant, storedState, worker, type TestTenant } from './tenant-fixture.ts';
import { createTestUser, jsonRequest, sessionRequest, signIn, type TestSession, type TestUser } from './user-fixture.ts';

async function errorOf(res: Response): Promise<{ status: number; code: string }> {
  const body = (await res.json()) as { error: { code: string } };
  return { status: res.status, code: body.error.code };
}

/** The session row behind a cookie "nv_session=<secret>". */
async function sessionHash(session: TestSession): Promise<string> {
  return hashSecret(session.cookie.slice('nv_session='.length));
}

describe('sessions: cookie, expiry, sign-out', () => {
  let t: TestTenant;
  let admin: TestUser;

  beforeAll(async () => {
    t = await createTestTenant();
    admin = await createTestUser(t.tenantId, 'tenant_admin');
  });

  it('signs in with a Secure, HttpOnly, SameSite=Strict cookie holding 256 random bits', async () => {
    const res = await worker(`${BASE}/v1/session`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'cf-connecting-ip': '2001:db8::1' },
      body: JSON.stringify({ email: admin.email.toUpperCase(), password: admin.password }),
    });
    expect(res.status).toBe(200);
    const cookie = res.headers.get('set-cookie')!;
    expect(cookie).toMatch(/^nv_session=[A-Za-z0-9_-]{43};/);
    expect(cookie).toMatch(/; HttpOnly/);
    expect(cookie).toMatch(/; Secure/);
    expect(cookie).toMatch(/; SameSite=Strict/);
    expect(cookie).toMatch(/; Path=\//);
    const body = (await res.json()) as { user: unknown; csrfToken: string };
    expect(body.user).toEqual({ id: admin.id, email: admin.email, role: 'tenant_admin', tenant: { slug: t.slug, name: `Test tenant ${t.slug}` } });
    expect(body.csrfToken).toMatch(/^[A-Za-z0-9_-]{43}$/);
    // Only the hash of the secret is stored.
    const secret = cookie.split(';')[0]!.slice('nv_session='.length);
    const stored = await env.DB.prepare('SELECT id_hash FROM sessions WHERE user_id = ?').bind(admin.id).all<{ id_hash: string }>();
    expect(stored.results.map((r) => r.id_hash)).toContain(await hashSecret(secret));
    expect(JSON.stringify(stored.results)).not.toContain(secret);
  });

  it('answers GET /v1/session with the user and the same CSRF token, and 401 without a cookie', async () => {
    const session = await signIn(admin);
    const res = await sessionRequest(session, 'GET', '/v1/session');
    expect(res.status).toBe(200);
    expect(((await res.json()) as { csrfToken: string }).csrfToken).toBe(session.csrfToken);
    expect(await errorOf(await worker(`${BASE}/v1/session`))).toEqual({ status: 401, code: 'credential_missing' });
    expect(await errorOf(await worker(`${BASE}/v1/admin/datasets`))).toEqual({ status: 401, code: 'credential_missing' });
    const forged = { cookie: 'nv_session=' + 'A'.repeat(43), csrfToken: 'x' };
    expect(await errorOf(await sessionRequest(forged, 'GET', '/v1/admin/datasets'))).toEqual({ status: 401, code: 'session_unknown' });

    // Past its absolute end: refused, and the row is gone.
    await env.DB.prepare('UPDATE sessions SET expires_at = ? WHERE id_hash = ?').bind(Date.now() - 1, await sessionHash(session)).run();
    expect(await errorOf(await sessionRequest(session, 'GET', '/v1/admin/datasets'))).toEqual({ status: 401, code: 'session_expired' });
    expect(await env.DB.prepare('SELECT 1 FROM sessions WHERE id_hash = ?').bind(await sessionHash(session)).first()).toBeNull();
  });

  it('ends an idle session after 30 minutes without requests', async () => {
    const session = await signIn(admin);
    expect((await sessionRequest(session, 'GET', '/v1/admin/datasets')).status).toBe(200);
    await env.DB.prepare('UPDATE sessions SET last_seen_at = ? WHERE id_hash = ?').bind(Date.now() - 31 * 60 * 1000, await sessionHash(session)).run();
    expect(await errorOf(await sessionRequest(session, 'GET', '/v1/admin/datasets'))).toEqual({ status: 401, code: 'session_expired' });
  });

  it('signs out with the CSRF token only; the cookie is cleared and no longer works', async () => {
    const session = await signIn(admin);
    expect(await errorOf(await sessionRequest(session, 'DELETE', '/v1/session', { csrf: null }))).toEqual({ status: 403, code: 'csrf_missing' });
    const out = await sessionRequest(session, 'DELETE', '/v1/session');
    expect(out.status).toBe(204);
    expect(out.headers.get('set-cookie')).toMatch(/^nv_session=;.*Max-Age=0/);
    expect(await errorOf(await sessionRequest(session, 'GET', '/v1/session'))).toEqual({ status: 401, code: 'session_unknown' });
  });

  it('stops working when its user is disabled', async () => {
    const user = await createTestUser(t.tenantId, 'tenant_editor');
    const session = await signIn(user);
    await env.DB.prepare("UPDATE users SET disabled_at = '2026-01-01T00:00:00Z' WHERE id = ?").bind(user.id).run();
    expect(await errorOf(await sessionRequest(session, 'GET', '/v1/admin/datasets'))).toEqual({ status: 401, code: 'user_disabled' });
  });
});

describe('CSRF: cookie-authenticated changes need the session token, Bearer needs none', () => {
  let t: TestTenant;
  let session: TestSession;

  beforeAll(async () => {
    t = await createTestTenant();
    session = await signIn(await createTestUser(t.tenantId, 'tenant_admin'));
  });

  it('refuses a cookie POST without or with a wrong token (403) and stores nothing', async () => {
    const other = await signIn(await createTestUser(t.tenantId, 'tenant_admin'));
    const before = await storedState();
    expect(await errorOf(await jsonRequest(session, 'POST', '/v1/admin/datasets', { slug: 'csrf-a' }, null))).toEqual({ status: 403, code: 'csrf_missing' });
    expect(await errorOf(await jsonRequest(session, 'POST', '/v1/admin/datasets', { slug: 'csrf-a' }, 'A'.repeat(43)))).toEqual({ status: 403, code: 'csrf_mismatch' });
    // Another session's token does not fit this session.
    expect(await errorOf(await jsonRequest(session, 'POST', '/v1/admin/datasets', { slug: 'csrf-a' }, other.csrfToken))).toEqual({ status: 403, code: 'csrf_mismatch' });
    expect(await errorOf(await sessionRequest(session, 'POST', '/v1/admin/keys', { body: '{"label":"x"}', contentType: 'application/json', csrf: null }))).toEqual({ status: 403, code: 'csrf_missing' });
    expect(await storedState()).toBe(before);
  });

  it('accepts the right token, reads need none, and Bearer requests need none', async () => {
    expect((await jsonRequest(session, 'POST', '/v1/admin/datasets', { slug: 'csrf-a' })).status).toBe(201);
    expect((await sessionRequest(session, 'GET', '/v1/admin/datasets', { csrf: null })).status).toBe(200);
    expect((await adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug: 'csrf-b' }), 'application/json')).status).toBe(201);
  });

  it('refuses a sign-in that is not JSON (a cross-site form cannot sign a browser in)', async () => {
    const res = await worker(`${BASE}/v1/session`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: 'email=a%40b.test&password=x',
    });
    expect(await errorOf(res)).toEqual({ status: 415, code: 'content_type' });
  });
});

describe('changing your own password', () => {
  it('needs the current password and the CSRF token, ends your other sessions and keeps this one', async () => {
    const t = await createTestTenant();
    const editor = await createTestUser(t.tenantId, 'tenant_editor');
    const [here, elsewhere] = [await signIn(editor), await signIn(editor)];
    const change = (body: unknown, csrf?: string | null) => jsonRequest(here, 'PUT', '/v1/session/password', body, csrf);
    const fresh = 'a new passphrase, long enough';

    expect(await errorOf(await change({ currentPassword: editor.password, newPassword: fresh }, null))).toEqual({ status: 403, code: 'csrf_missing' });
    expect(await errorOf(await change({ currentPassword: 'not it', newPassword: fresh }))).toEqual({ status: 403, code: 'password_wrong' });
    const short = await change({ currentPassword: editor.password, newPassword: 'too short' });
    expect(short.status).toBe(400);
    expect(((await short.json()) as { error: { field: string } }).error.field).toBe('newPassword');
    const byToken = await adminRequest(t, 'PUT', '/v1/session/password', JSON.stringify({ currentPassword: 'x', newPassword: fresh }), 'application/json');
    expect(await errorOf(byToken)).toEqual({ status: 403, code: 'credential_wrong_kind' });

    expect((await change({ currentPassword: editor.password, newPassword: fresh })).status).toBe(204);
    expect((await sessionRequest(here, 'GET', '/v1/session')).status).toBe(200);
    expect(await errorOf(await sessionRequest(elsewhere, 'GET', '/v1/session'))).toEqual({ status: 401, code: 'session_unknown' });
    expect((await signIn({ email: editor.email, password: fresh })).cookie).toMatch(/^nv_session=/);
    const old = await worker(`${BASE}/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: editor.email, password: editor.password }) });
    expect(await errorOf(old)).toEqual({ status: 401, code: 'login_failed' });
  });
});
