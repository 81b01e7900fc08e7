import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { hashSecret } from '../../api/auth/secrets.ts';
import { adminRequest, BASE, createTestTenant, publishDataset, registeredKey, type TestTenant, worker } from './tenant-fixture.ts';
import { tinyZipCsv } from './open-data-sites.ts';

interface CreatedKey { id: string; secret: string; label: string; datasets: string[] | null; monthlyQuota: number | null }

async function createKey(t: TestTenant, body: object): Promise<Response> {
  return adminRequest(t, 'POST', '/v1/admin/keys', JSON.stringify(body), 'application/json');
}

function asKey(secret: string, method: string, path: string, body?: BodyInit): Promise<Response> {
  const headers: Record<string, string> = { authorization: `Bearer ${secret}` };
  if (body) headers['content-type'] = 'application/octet-stream';
  return worker(`${BASE}${path}`, { method, headers, ...(body ? { body } : {}) });
}

describe('API keys: shown once, stored hashed, scoped to datasets, with monthly quotas', () => {
  let t: TestTenant;
  let pir: PirKeyPair;
  let columns: number;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'quota-a', tinyZipCsv(5));
    await publishDataset(t, 'quota-b', tinyZipCsv(4));
    pir = await registeredKey(t);
    const manifest = (await (await asKey(t.apiKey, 'GET', '/v1/datasets/quota-a/manifest')).json()) as { matrix: { columns: number } };
    columns = manifest.matrix.columns;
  });

  const query = () => encodeQuery(pir.n, makeQuery(pir, columns, 0));

  it('shows the secret once and stores only its SHA-256', async () => {
    const res = await createKey(t, { label: 'app', datasets: ['quota-a'], monthlyQuota: 10 });
    expect(res.status).toBe(201);
    const key = (await res.json()) as CreatedKey;
    expect(key).toMatchObject({ label: 'app', datasets: ['quota-a'], monthlyQuota: 10 });
    // 32 random bytes in base64url after the prefix: 256 bits, above the 128 the issue asks for.
    expect(key.secret).toMatch(/^nvk_[A-Za-z0-9_-]{43}$/);
    const stored = await env.DB.prepare('SELECT * FROM credentials WHERE id = ?').bind(key.id).first<Record<string, unknown>>();
    expect(JSON.stringify(stored)).not.toContain(key.secret.slice(4));
    expect(stored!.secret_hash).toBe(await hashSecret(key.secret));
    const list = await (await adminRequest(t, 'GET', '/v1/admin/keys')).text();
    expect(list).toContain(key.id);
    expect(list).not.toContain(key.secret.slice(4));
    expect(list).not.toContain(stored!.secret_hash as string);
  });

  it('refuses scopes naming unknown datasets and quotas that are not positive whole numbers', async () => {
    const unknown = await createKey(t, { label: 'x', datasets: ['quota-a', 'nowhere'] });
    expect(unknown.status).toBe(404);
    expect(await unknown.json()).toMatchObject({ error: { code: 'dataset_unknown', field: 'datasets.1' } });
    for (const monthlyQuota of [0, -1, 2.5, '10']) {
      const bad = await createKey(t, { label: 'x', monthlyQuota });
      expect(bad.status).toBe(400);
      expect(await bad.json()).toMatchObject({ error: { code: 'invalid_body', field: 'monthlyQuota' } });
    }
  });

  it('a scoped key reads its datasets only, and wrong-scope queries are counted as rejected', async () => {
    const key = (await (await createKey(t, { label: 'only-a', datasets: ['quota-a'] })).json()) as CreatedKey;
    expect((await asKey(key.secret, 'GET', '/v1/datasets/quota-a/manifest')).status).toBe(200);
    const manifestB = await asKey(key.secret, 'GET', '/v1/datasets/quota-b/manifest');
    expect(manifestB.status).toBe(403);
    expect(await manifestB.json()).toMatchObject({ error: { code: 'key_scope', field: 'dataset' } });
    // Out of scope is refused the same way whether or not the dataset exists.
    const missing = await asKey(key.secret, 'POST', '/v1/datasets/no-such-set/versions/1/query', query());
    expect(missing.status).toBe(403);
    const res = await asKey(key.secret, 'POST', '/v1/datasets/quota-b/versions/1/query', query());
    expect(res.status).toBe(403);
    expect((await asKey(key.secret, 'POST', '/v1/datasets/quota-a/versions/1/query', query())).status).toBe(200);
    const rejected = await env.DB.prepare("SELECT reason, dataset_slug AS slug, queries FROM rejections_daily WHERE credential_id = ? ORDER BY slug").bind(key.id).all();
    expect(rejected.results).toEqual([
      { reason: 'key_scope', slug: 'no-such-set', queries: 1 },
      { reason: 'key_scope', slug: 'quota-b', queries: 1 },
    ]);
    const answered = await env.DB.prepare('SELECT SUM(queries) AS n FROM usage_daily WHERE credential_id = ?').bind(key.id).first<{ n: number }>();
    expect(answered!.n).toBe(1);
  });

  it('answers 429 quota_exceeded with Retry-After up to the next UTC month once the quota is used', async () => {
    const key = (await (await createKey(t, { label: 'three', monthlyQuota: 3 })).json()) as CreatedKey;
    for (let i = 0; i < 3; i++) expect((await asKey(key.secret, 'POST', '/v1/datasets/quota-a/versions/1/query', query())).status).toBe(200);
    const before = Date.now();
    const refused = await asKey(key.secret, 'POST', '/v1/datasets/quota-b/versions/1/query', query());
    expect(refused.status).toBe(429);
    expect(await refused.json()).toMatchObject({ error: { code: 'quota_exceeded' } });
    // RFC 9110 section 10.2.3: Retry-After as delay-seconds. Expected: to 00:00 UTC on the 1st of next month.
    const now = new Date(before);
    const expected = (Date.UTC(now.getUTCFullYear(), now.getUTCMonth() + 1, 1) - before) / 1000;
    const retryAfter = Number(refused.headers.get('retry-after'));
    expect(Number.isInteger(retryAfter)).toBe(true);
    expect(Math.abs(retryAfter - expected)).toBeLessThan(5);
    const keys = (await (await adminRequest(t, 'GET', '/v1/admin/keys')).json()) as { keys: Array<{ id: string; usedThisMonth: number }> };
    expect(keys.keys.find((k) => k.id === key.id)!.usedThisMonth).toBe(3);
  });

  it('a malformed query takes no quota slot', async () => {
    const key = (await (await createKey(t, { label: 'one', monthlyQuota: 1 })).json()) as CreatedKey;
    const bad = query().slice(0, 20);
    expect((await asKey(key.secret, 'POST', '/v1/datasets/quota-a/versions/1/query', bad)).status).toBe(400);
    expect((await asKey(key.secret, 'POST', '/v1/datasets/quota-a/versions/1/query', query())).status).toBe(200);
    expect((await asKey(key.secret, 'POST', '/v1/datasets/quota-a/versions/1/query', query())).status).toBe(429);
  });

  it('under 40 concurrent queries a quota of 7 answers exactly 7: no overshoot', async () => {
    const key = (await (await createKey(t, { label: 'seven', monthlyQuota: 7 })).json()) as CreatedKey;
    const bodies = Array.from({ length: 40 }, query);
    const statuses = await Promise.all(bodies.map(async (b) => (await asKey(key.secret, 'POST', '/v1/datasets/quota-a/versions/1/query', b)).status));
    expect(statuses.filter((s) => s === 200).length).toBe(7);
    expect(statuses.filter((s) => s === 429).length).toBe(33);
    const answered = await env.DB.prepare('SELECT SUM(queries) AS n FROM usage_daily WHERE credential_id = ?').bind(key.id).first<{ n: number }>();
    const refused = await env.DB.prepare("SELECT SUM(queries) AS n FROM rejections_daily WHERE credential_id = ? AND reason = 'quota_exceeded'").bind(key.id).first<{ n: number }>();
    expect([answered!.n, refused!.n]).toEqual([7, 33]);
  });

  it('a revoked key is refused, and revoking twice keeps the first time', async () => {
    const key = (await (await createKey(t, { label: 'gone' })).json()) as CreatedKey;
    const first = (await (await adminRequest(t, 'POST', `/v1/admin/keys/${key.id}/revoke`)).json()) as { revokedAt: string };
    const second = (await (await adminRequest(t, 'POST', `/v1/admin/keys/${key.id}/revoke`)).json()) as { revokedAt: string };
    expect(second.revokedAt).toBe(first.revokedAt);
    const res = await asKey(key.secret, 'GET', '/v1/datasets/quota-a/manifest');
    expect(res.status).toBe(403);
    expect(await res.json()).toMatchObject({ error: { code: 'credential_revoked' } });
  });
});
