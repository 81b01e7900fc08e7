import { env } from 'cloudflare:test';
import { exports } from 'cloudflare:workers';
import { hashSecret, newSecret } from '../../api/auth/secrets.ts';
import { proveModulus } from '../../core/modulus-proof/prove-modulus.ts';
import { generateKeyPair, type GenerateKeyPairOptions, type PirKeyPair } from '../../core/pir/keys.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeModulusProof, encodeQuery } from '../../core/pir/wire.ts';

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
export async function publishDataset(t: TestTenant, slug: string, csv: string, layout?: string, maxK?: number): Promise<number> {
  await adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug }), 'application/json');
  const up = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions`, csv, 'text/csv');
  if (up.status !== 201) throw new Error(`upload failed: ${up.status} ${await up.text()}`);
  const { version } = (await up.json()) as { version: number };
  await buildAndWait(t, slug, version, layout, maxK);
  const pub = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions/${version}/publish`);
  if (pub.status !== 200) throw new Error(`publish failed: ${pub.status} ${await pub.text()}`);
  return version;
}

export interface VersionBody {
  version: number;
  state: string;
  author: string | null;
  error: string | null;
  progress: { stage: string; percent: number } | null;
  layout: string | null;
  layoutReason: string | null;
  maxK: number | null;
  matrix: { rows: number; columns: number; ones: number; products: number } | null;
  servedUntil: string | null;
}

/** Queues a build (202) and polls the version until the queue consumer finished it. */
export async function buildAndWait(t: TestTenant, slug: string, version: number, layout?: string, maxK?: number): Promise<VersionBody> {
  const path = `/v1/admin/datasets/${slug}/versions/${version}`;
  const options = new URLSearchParams({ ...(layout ? { layout } : {}), ...(maxK ? { maxK: String(maxK) } : {}) }).toString();
  const queued = await adminRequest(t, 'POST', `${path}/build${options ? `?${options}` : ''}`);
  if (queued.status !== 202) throw new Error(`build not queued: ${queued.status} ${await queued.text()}`);
  return waitForVersion(t, slug, version);
}

/** Polls a version until it leaves "building"; throws if it failed or takes over 150 s. */
export async function waitForVersion(t: TestTenant, slug: string, version: number, expect: 'ready' | 'failed' = 'ready'): Promise<VersionBody> {
  const until = Date.now() + 150_000;
  for (;;) {
    const row = (await (await adminRequest(t, 'GET', `/v1/admin/datasets/${slug}/versions/${version}`)).json()) as VersionBody;
    if (row.state !== 'building') {
      if (row.state !== expect) throw new Error(`version ${version} of ${slug} is ${row.state}, expected ${expect}: ${row.error}`);
      return row;
    }
    if (Date.now() > until) throw new Error(`version ${version} of ${slug} still building after 150 s (${JSON.stringify(row.progress)})`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** Everything a refused request must leave untouched: D1 rows of interest and the R2 key list. */
export async function storedState(): Promise<string> {
  const tables = ['tenants', 'credentials', 'datasets', 'versions', 'usage_daily', 'users', 'audit_events'];
  const rows = await Promise.all(tables.map((t) => env.DB.prepare(`SELECT * FROM ${t} ORDER BY 1, 2`).all()));
  const blobs = await env.BLOBS.list();
  return JSON.stringify({ rows: rows.map((r) => r.results), blobs: blobs.objects.map((o) => `${o.key}:${o.size}`) });
}

/** Proves a client key's modulus and registers it (POST /v1/moduli), as the SDK does before its first query. */
export async function registerKey(t: TestTenant, key: PirKeyPair): Promise<PirKeyPair> {
  const res = await appRequest(t, 'POST', '/v1/moduli', encodeModulusProof(proveModulus(key)));
  if (res.status !== 201 && res.status !== 200) throw new Error(`modulus not registered: ${res.status} ${await res.text()}`);
  return key;
}

/** A new client key whose modulus the server answers (generated, proven, registered). */
export async function registeredKey(t: TestTenant, options: GenerateKeyPairOptions = {}): Promise<PirKeyPair> {
  return registerKey(t, await generateKeyPair({ modulusBits: 2048, ...options }));
}

/**
 * A published dataset, a registered client key and an API key with a monthly quota of one
 * query: what the quota tests start from. `query()` posts one fresh query with that API key.
 */
export async function oneQueryAMonth(t: TestTenant, slug: string, csv: string) {
  await publishDataset(t, slug, csv);
  const pir = await registeredKey(t);
  const manifest: Manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', `/v1/datasets/${slug}/manifest`)).json());
  const made = await adminRequest(t, 'POST', '/v1/admin/keys', JSON.stringify({ label: 'one a month', monthlyQuota: 1 }), 'application/json');
  const { secret, id: keyId } = (await made.json()) as { secret: string; id: string };
  const query = () =>
    worker(`${BASE}/v1/datasets/${slug}/versions/${manifest.version}/query`, {
      method: 'POST',
      headers: { authorization: `Bearer ${secret}`, 'content-type': 'application/octet-stream' },
      body: encodeQuery(pir.n, makeQuery(pir, manifest.matrix.columns, 0)),
    });
  return { manifest, keyId, query };
}
