import { env } from 'cloudflare:test';
import { exports } from 'cloudflare:workers';
import { hashSecret, newSecret } from '../../api/auth/secrets.ts';

export const BASE = 'http://nearveil.test';

/** The Worker under test, called in-process exactly as wrangler dev would route a request. */
export const worker = (input: Request | string, init?: RequestInit) => exports.default.fetch(input as Request, init);

export interface TestTenant {
  tenantId: string;
  slug: string;
  adminToken: string;
  apiKey: string;
  apiKeyId: string;
}

/** A fresh tenant with an admin token and an API key, written straight into D1. */
export async function createTestTenant(slug = 't-' + crypto.randomUUID().slice(0, 8)): Promise<TestTenant> {
  const tenantId = crypto.randomUUID();
  const adminToken = newSecret('admin');
  const apiKey = newSecret('query');
  const apiKeyId = crypto.randomUUID();
  await env.DB.batch([
    env.DB.prepare('INSERT INTO tenants (id, slug, name) VALUES (?, ?, ?)').bind(tenantId, slug, `Test tenant ${slug}`),
    env.DB.prepare('INSERT INTO credentials (id, tenant_id, kind, secret_hash, label) VALUES (?, ?, ?, ?, ?)').bind(
      crypto.randomUUID(), tenantId, 'admin', await hashSecret(adminToken), 'test admin'),
    env.DB.prepare('INSERT INTO credentials (id, tenant_id, kind, secret_hash, label) VALUES (?, ?, ?, ?, ?)').bind(
      apiKeyId, tenantId, 'query', await hashSecret(apiKey), 'test key'),
  ]);
  return { tenantId, slug, adminToken, apiKey, apiKeyId };
}

export function adminRequest(t: TestTenant, method: string, path: string, body?: BodyInit, contentType?: string): Promise<Response> {
  const headers: Record<string, string> = { authorization: `Bearer ${t.adminToken}` };
  if (contentType) headers['content-type'] = contentType;
  return worker(`${BASE}${path}`, { method, headers, ...(body === undefined ? {} : { body }) });
}

export function appRequest(t: TestTenant, method: string, path: string, body?: BodyInit): Promise<Response> {
  const headers: Record<string, string> = { authorization: `Bearer ${t.apiKey}` };
  if (body !== undefined) headers['content-type'] = 'application/octet-stream';
  return worker(`${BASE}${path}`, { method, headers, ...(body === undefined ? {} : { body }) });
}

/** Creates, uploads, builds (with the layout asked for, else auto) and publishes a dataset from CSV text; returns the version number. */
export async function publishDataset(t: TestTenant, slug: string, csv: string, layout?: string): Promise<number> {
  await adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug }), 'application/json');
  const up = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions`, csv, 'text/csv');
  if (up.status !== 201) throw new Error(`upload failed: ${up.status} ${await up.text()}`);
  const { version } = (await up.json()) as { version: number };
  const built = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions/${version}/build${layout ? `?layout=${layout}` : ''}`);
  if (built.status !== 200) throw new Error(`build failed: ${built.status} ${await built.text()}`);
  const pub = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions/${version}/publish`);
  if (pub.status !== 200) throw new Error(`publish failed: ${pub.status} ${await pub.text()}`);
  return version;
}

/** Everything a refused request must leave untouched: D1 rows of interest and the R2 key list. */
export async function storedState(): Promise<string> {
  const tables = ['tenants', 'credentials', 'datasets', 'versions', 'usage_daily', 'users', 'audit_events'];
  const rows = await Promise.all(tables.map((t) => env.DB.prepare(`SELECT * FROM ${t} ORDER BY 1, 2`).all()));
  const blobs = await env.BLOBS.list();
  return JSON.stringify({ rows: rows.map((r) => r.results), blobs: blobs.objects.map((o) => `${o.key}:${o.size}`) });
}
