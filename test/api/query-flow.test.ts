import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { countAtEachAnswer } from './count-at-each-answer.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { connect } from '../../sdk/client.ts';
import { BASE, createTestTenant, publishDataset, worker, type TestTenant } from './tenant-fixture.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';

describe('upload, build, publish, then a private query through the SDK', () => {
  const { csv, sites } = rhodeIslandZipCsv();
  let tenant: TestTenant;
  let key: PirKeyPair;

  beforeAll(async () => {
    tenant = await createTestTenant();
    await publishDataset(tenant, 'ri-zips', csv);
    key = await generateKeyPair({ modulusBits: 2048 });
  });

  it('uses a real open-data table of a useful size', () => {
    expect(sites.length).toBeGreaterThan(50);
  });

  it('finds the great-circle nearest site (geokdbush), privately', async () => {
    const client = connect({ endpoint: BASE, apiKey: tenant.apiKey, keyPair: key, fetch: (r) => worker(r) });
    // Points spread over the box and a little beyond it (the outside region must answer too).
    const points = [
      { lat: 41.824, lon: -71.413 },
      { lat: 41.49, lon: -71.31 },
      { lat: 41.2, lon: -71.58 },
      { lat: 42.3, lon: -71.0 },
      { lat: 40.9, lon: -72.2 },
    ];
    for (const point of points) {
      const answer = await client.nearest('ri-zips', point);
      const found = answer.results[0]!;
      // The site geokdbush (npm) finds nearest, by id.
      expect(found.id, `${point.lat}, ${point.lon}`).toBe(geokdbushNearest(sites, point.lat, point.lon).id);
      expect(answer.cost.bytesUp).toBe(10 + 256 * (answer.cost.columns + 1));
      expect(answer.cost.bytesDown).toBe(10 + 256 * answer.cost.rows);
    }
  });

  it('answers keys of both forms in the Worker: low half of n all ones (the default) and unconstrained', async () => {
    const plainKey = await generateKeyPair({ modulusBits: 2048, lowOnes: false });
    const point = { lat: 41.7, lon: -71.5 };
    // geokdbush (npm) as the outside reference for which site is nearest.
    const reference = geokdbushNearest(sites, point.lat, point.lon);
    for (const keyPair of [key, plainKey]) {
      const client = connect({ endpoint: BASE, apiKey: tenant.apiKey, keyPair, fetch: (r) => worker(r) });
      const found = (await client.nearest('ri-zips', point)).results[0]!;
      expect(found.id).toBe(reference.id);
    }
  });

  it('meters answered queries per key, dataset, version and day', async () => {
    const queries = async () => (await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS n FROM usage_daily WHERE credential_id = ?').bind(tenant.apiKeyId).first<{ n: number }>())!.n;
    const before = await queries();
    // Each answer is counted before it goes out (count-at-each-answer.ts).
    const { fetch, counted } = countAtEachAnswer(queries);
    const client = connect({ endpoint: BASE, apiKey: tenant.apiKey, keyPair: key, fetch });
    await client.nearest('ri-zips', { lat: 41.7, lon: -71.5 });
    await client.nearest('ri-zips', { lat: 41.6, lon: -71.4 });
    expect(counted).toEqual([before + 1, before + 2]);
    // Products metered per answer are the ones the build's plan promises (manifest.matrix.plan).
    const { plan } = (await client.manifest('ri-zips')).matrix;
    // This dataset stays under the tests' fan-out threshold: one invocation answers it.
    expect(plan.products).toBeLessThanOrEqual(Number(env.FANOUT_PRODUCTS_PER_PART));
    const usage = await env.DB.prepare('SELECT SUM(queries) AS q, SUM(multiplications) AS m FROM usage_daily WHERE credential_id = ?')
      .bind(tenant.apiKeyId)
      .first<{ q: number; m: number }>();
    expect(usage!.m).toBe(usage!.q * plan.products);
  });

  it('serves the manifest with the matrix shape clients size queries by', async () => {
    const res = await worker(`${BASE}/v1/datasets/ri-zips/manifest`, { headers: { authorization: `Bearer ${tenant.apiKey}` } });
    expect(res.status).toBe(200);
    const manifest = (await res.json()) as { siteCount: number; matrix: { rows: number; columns: number }; modulusBits: number[] };
    expect(manifest.siteCount).toBe(sites.length);
    expect(manifest.modulusBits).toEqual([2048, 3072]);
    expect(manifest.matrix.rows).toBeGreaterThan(0);
  });
});
