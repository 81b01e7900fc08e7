import { createExecutionContext, createMessageBatch, env, getQueueResult } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { markQueued, resumeIfSilent } from '../../api/builds/queue-build.ts';
import { consumeBuilds } from '../../api/builds/consume-builds.ts';
import { database } from '../../api/db/client.ts';
import { findDataset, findVersion } from '../../api/datasets/repository.ts';
import { sweepVersions } from '../../api/datasets/retire-versions.ts';
import type { Env } from '../../api/env.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { connect } from '../../sdk/client.ts';
import { adminRequest, appRequest, BASE, buildAndWait, createTestTenant, publishDataset, registeredKey, waitForVersion, worker, type TestTenant, type VersionBody } from './tenant-fixture.ts';
import { rhodeIslandZipCsv, tinyZipCsv } from './open-data-sites.ts';

const apiEnv = env as unknown as Env;

async function upload(t: TestTenant, slug: string, csv: string): Promise<number> {
  const res = await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions`, csv, 'text/csv');
  expect(res.status).toBe(201);
  return ((await res.json()) as { version: number }).version;
}

const version = async (t: TestTenant, slug: string, n: number) => (await (await adminRequest(t, 'GET', `/v1/admin/datasets/${slug}/versions/${n}`)).json()) as VersionBody;
const post = (t: TestTenant, path: string, body?: object) =>
  adminRequest(t, 'POST', path, body === undefined ? undefined : JSON.stringify(body), body === undefined ? undefined : 'application/json');

/** Runs the queue consumer by hand on one delivery of a build message, dying at `killAt` if given. */
async function deliver(datasetId: string, number: number, attempts: number, killAt?: string) {
  const batch = createMessageBatch('nearveil-builds', [{ id: `m-${number}-${attempts}`, timestamp: new Date(), attempts, body: { datasetId, version: number, layout: 'auto' } }]);
  await consumeBuilds(batch, apiEnv, {
    onStage: (stage) => {
      if (stage === killAt) throw new Error(`worker killed at ${stage}`);
    },
  });
  return getQueueResult(batch, createExecutionContext());
}

describe('builds on the queue', () => {
  let t: TestTenant;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'builds', tinyZipCsv(5));
  });

  it('queues a build (202, stage "queued"), then the consumer makes it ready with its matrix shape', async () => {
    const n = await upload(t, 'builds', tinyZipCsv(7));
    const queued = await adminRequest(t, 'POST', `/v1/admin/datasets/builds/versions/${n}/build?layout=grid`);
    expect(queued.status).toBe(202);
    expect(await queued.json()).toMatchObject({ version: n, state: 'building', progress: { stage: 'queued', percent: 0 }, error: null });
    const ready = await waitForVersion(t, 'builds', n);
    expect(ready).toMatchObject({ state: 'ready', progress: null, error: null, layout: 'grid' });
    expect(ready.matrix!.rows).toBeGreaterThan(0);
    const again = await adminRequest(t, 'POST', `/v1/admin/datasets/builds/versions/${n}/build`);
    expect(again.status).toBe(409);
    expect(await again.json()).toMatchObject({ error: { code: 'version_state', field: 'version' } });
  });

  it('a build killed half-way never becomes active, leaves the active version answering and shows failed with its error', async () => {
    const db = database(apiEnv);
    const dataset = await findDataset(db, t.tenantId, 'builds');
    const n = await upload(t, 'builds', rhodeIslandZipCsv().csv);
    await markQueued(db, dataset, await findVersion(db, dataset, n), 'auto');
    const key = await generateKeyPair({ modulusBits: 2048 });
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });

    // Attempt 1 dies after the matrix blob was written, before the manifest: the queue is asked to retry.
    const first = await deliver(dataset.id, n, 1, 'writing-manifest');
    expect(first.retryMessages.map((m: { msgId: string }) => m.msgId)).toEqual([`m-${n}-1`]);
    const retrying = await version(t, 'builds', n);
    expect(retrying).toMatchObject({ state: 'building', progress: { stage: 'writing-manifest' } });
    expect(retrying.error).toMatch(/attempt 1 of 3 failed, retrying: worker killed at writing-manifest/);
    expect(await env.BLOBS.head(`manifests/${dataset.id}/${n}.json`)).toBeNull();
    // The active version still answers, through the SDK and by number; the half-built one does not.
    expect((await client.nearest('builds', { lat: 41.8, lon: -71.4 })).version).toBe(1);
    const half = await appRequest(t, 'POST', `/v1/datasets/builds/versions/${n}/query`, encodeQuery(key.n, makeQuery(key, 1, 0)));
    expect(half.status).toBe(410);
    expect((await post(t, `/v1/admin/datasets/builds/versions/${n}/publish`)).status).toBe(409);

    // The last attempt dies mid-build too: the version is failed, visibly, and the queue lets go.
    await deliver(dataset.id, n, 2, 'building');
    const last = await deliver(dataset.id, n, 3, 'writing-matrix');
    expect(last.explicitAcks).toEqual([`m-${n}-3`]);
    const failed = await version(t, 'builds', n);
    expect(failed).toMatchObject({ state: 'failed', progress: null, error: 'worker killed at writing-matrix' });
    const list = (await (await adminRequest(t, 'GET', '/v1/admin/datasets/builds/versions')).json()) as { activeVersion: number };
    expect(list.activeVersion).toBe(1);
    expect((await client.nearest('builds', { lat: 41.5, lon: -71.5 })).version).toBe(1);

    // A failed version can be built again, then published.
    await buildAndWait(t, 'builds', n);
    expect((await post(t, `/v1/admin/datasets/builds/versions/${n}/publish`)).status).toBe(200);
    const answer = await client.nearest('builds', { lat: 41.5, lon: -71.5 });
    expect(answer.version).toBe(n);
    // The site geokdbush (npm) finds nearest among the version's sites, by id.
    expect(answer.results[0]!.id).toBe(geokdbushNearest(rhodeIslandZipCsv().sites, 41.5, -71.5).id);
  });

  it('a delivery after the last attempt (a Worker that died without reporting) marks the build failed', async () => {
    const db = database(apiEnv);
    const dataset = await findDataset(db, t.tenantId, 'builds');
    const n = await upload(t, 'builds', tinyZipCsv(8));
    await markQueued(db, dataset, await findVersion(db, dataset, n), 'auto');
    const result = await deliver(dataset.id, n, 4);
    expect(result.explicitAcks).toHaveLength(1);
    expect(await version(t, 'builds', n)).toMatchObject({ state: 'failed', error: expect.stringMatching(/^build interrupted/) });
  });

  it('a build whose message was lost (a restart) is queued again when the version is read, and then builds', async () => {
    const db = database(apiEnv);
    const dataset = await findDataset(db, t.tenantId, 'builds');
    const n = await upload(t, 'builds', tinyZipCsv(8));
    // Marked building as the build route does, but no message reaches the queue: as after a restart.
    await markQueued(db, dataset, await findVersion(db, dataset, n), 'auto', 2);
    expect((await version(t, 'builds', n)).progress).toMatchObject({ stage: 'queued' });
    await env.DB.prepare('UPDATE versions SET progress_at = ? WHERE dataset_id = ? AND number = ?').bind(new Date(Date.now() - 61_000).toISOString(), dataset.id, n).run();
    const read = await version(t, 'builds', n);
    expect(read).toMatchObject({ state: 'building', progress: { stage: 'requeued' }, error: expect.stringMatching(/stopped reporting/) });
    // Read again at once: not queued a second time. The one message may already be building
    // (the consumer can start between the two reads), so its stage is requeued or a build stage.
    expect(['requeued', 'reading', 'details', 'regions', 'matrix', 'plan', 'hash', 'done']).toContain((await version(t, 'builds', n)).progress?.stage);
    const built = await waitForVersion(t, 'builds', n);
    expect(built).toMatchObject({ state: 'ready', maxK: 2 });
    // One delivery built it: a second message would have counted a second attempt.
    const row = await env.DB.prepare('SELECT build_attempts FROM versions WHERE dataset_id = ? AND number = ?').bind(dataset.id, n).first<{ build_attempts: number }>();
    expect(row?.build_attempts).toBe(1);
  });

  it('queues a silent build once, however often and however concurrently it is read', async () => {
    const db = database(apiEnv);
    const dataset = await findDataset(db, t.tenantId, 'builds');
    const n = await upload(t, 'builds', tinyZipCsv(7));
    await markQueued(db, dataset, await findVersion(db, dataset, n), 'auto');
    await env.DB.prepare('UPDATE versions SET progress_at = ? WHERE dataset_id = ? AND number = ?').bind(new Date(Date.now() - 61_000).toISOString(), dataset.id, n).run();
    const sent: unknown[] = [];
    const counting = { ...apiEnv, BUILDS: { send: async (message: unknown) => void sent.push(message) } } as unknown as Env;
    // Two readers that both read the row before either requeued it, then a third after.
    const [first, second] = [await findVersion(db, dataset, n), await findVersion(db, dataset, n)];
    expect(await resumeIfSilent(counting, db, first)).toBe(true);
    expect(await resumeIfSilent(counting, db, second)).toBe(false);
    expect(await resumeIfSilent(counting, db, await findVersion(db, dataset, n))).toBe(false);
    expect(sent).toEqual([{ datasetId: dataset.id, version: n, layout: 'auto', maxK: 1 }]);
    await sweepVersions(apiEnv, new Date(Date.now() + 31 * 60 * 1000)); // fails it, so later tests see no building version
  });

  it('the sweep fails a build that stopped reporting progress', async () => {
    const db = database(apiEnv);
    const dataset = await findDataset(db, t.tenantId, 'builds');
    const n = await upload(t, 'builds', tinyZipCsv(9));
    await markQueued(db, dataset, await findVersion(db, dataset, n), 'auto');
    const report = await sweepVersions(apiEnv, new Date(Date.now() + 31 * 60 * 1000));
    expect(report.failedBuilds).toContainEqual({ datasetId: dataset.id, version: n });
    expect(await version(t, 'builds', n)).toMatchObject({ state: 'failed', error: expect.stringMatching(/no progress/) });
  });
});

describe('publish and rollback switch the active version atomically; old versions answer through their grace', () => {
  let t: TestTenant;
  let key: PirKeyPair;

  beforeAll(async () => {
    t = await createTestTenant();
    key = await registeredKey(t);
  });

  it('loses no query while a rollback runs, retires the old version after its grace and collects its blobs', async () => {
    await publishDataset(t, 'roll', tinyZipCsv(5));
    const v2 = await upload(t, 'roll', tinyZipCsv(6));
    await buildAndWait(t, 'roll', v2);
    expect((await post(t, `/v1/admin/datasets/roll/versions/${v2}/publish`)).status).toBe(200);
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const manifest2 = await client.manifest('roll');
    expect(manifest2.version).toBe(2);

    // 30 queries pinned to version 2 and 10 SDK lookups, racing a rollback to version 1.
    const pinned = Array.from({ length: 30 }, () => appRequest(t, 'POST', '/v1/datasets/roll/versions/2/query', encodeQuery(key.n, makeQuery(key, manifest2.matrix.columns, 0))));
    const lookups = Array.from({ length: 10 }, () => client.nearest('roll', { lat: 41.8, lon: -71.4 }));
    const rollback = post(t, '/v1/admin/datasets/roll/rollback');
    const [statuses, found, rolled] = await Promise.all([Promise.all(pinned).then((rs) => rs.map((r) => r.status)), Promise.all(lookups), rollback]);
    expect(statuses).toEqual(Array(30).fill(200));
    // Each lookup is answered whole by one version, 2 (before the switch) or 1 (after), with the
    // site geokdbush (npm) finds nearest among that version's sites (the first 6 or 5 ZIPs).
    const nearestIn = { 1: geokdbushNearest(rhodeIslandZipCsv().sites.slice(0, 5), 41.8, -71.4).id, 2: geokdbushNearest(rhodeIslandZipCsv().sites.slice(0, 6), 41.8, -71.4).id };
    found.forEach((answer, i) => {
      expect([1, 2], `lookup ${i}`).toContain(answer.version);
      expect(answer.results[0]!.id, `lookup ${i} on version ${answer.version}`).toBe(nearestIn[answer.version as 1 | 2]);
    });
    expect(await rolled.json()).toMatchObject({ dataset: 'roll', activeVersion: 1, previousVersion: 2 });

    // After the switch: new readers get version 1; version 2 still answers, until its grace ends.
    expect((await client.manifest('roll')).version).toBe(1);
    const v2row = await version(t, 'roll', 2);
    expect(v2row.state).toBe('ready');
    const grace = Number(env.VERSION_GRACE_SECONDS);
    expect(Date.parse(v2row.servedUntil!) - Date.now()).toBeGreaterThan((grace - 60) * 1000);
    expect((await appRequest(t, 'POST', '/v1/datasets/roll/versions/2/query', encodeQuery(key.n, makeQuery(key, manifest2.matrix.columns, 0)))).status).toBe(200);

    const dataset = await findDataset(database(apiEnv), t.tenantId, 'roll');
    const v1row = await findVersion(database(apiEnv), dataset, 1);
    const v2stored = await findVersion(database(apiEnv), dataset, 2);
    const report = await sweepVersions(apiEnv, new Date(Date.now() + (grace + 2 * 3600) * 1000));
    expect(report.retired).toContainEqual({ datasetId: dataset.id, version: 2 });
    const v2details = manifest2.details!;
    const v2own = [`matrices/${v2details.matrix.contentHash}.nvm`, `sealed/${v2details.sealedHash}.nvs`];
    expect(report.deletedBlobs).toEqual(expect.arrayContaining([v2stored.manifestKey, v2stored.matrixKey, ...v2own]));
    expect(await env.BLOBS.head(v2stored.matrixKey!)).toBeNull();
    for (const key of v2own) expect(await env.BLOBS.head(key), key).toBeNull();
    expect(await env.BLOBS.head(`sealed/${(await client.manifest('roll')).details!.sealedHash}.nvs`)).not.toBeNull();
    expect(await env.BLOBS.head(v1row.matrixKey!)).not.toBeNull();
    const gone = await appRequest(t, 'POST', '/v1/datasets/roll/versions/2/query', encodeQuery(key.n, makeQuery(key, manifest2.matrix.columns, 0)));
    expect(gone.status).toBe(410);
    expect((await client.nearest('roll', { lat: 41.8, lon: -71.4 })).version).toBe(1);

    // A retired version must be built again before it can be published.
    const refused = await post(t, '/v1/admin/datasets/roll/versions/2/publish');
    expect(refused.status).toBe(409);
    expect(await refused.json()).toMatchObject({ error: { code: 'version_retired' } });
    await buildAndWait(t, 'roll', 2);
    expect((await post(t, '/v1/admin/datasets/roll/versions/2/publish')).status).toBe(200);
    expect((await client.nearest('roll', { lat: 41.8, lon: -71.4 })).version).toBe(2);
  });

  it('keeps a partition matrix while a live veiled version shares it, and collects it after the last one retires', async () => {
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const later = (hours: number) => new Date(Date.now() + (Number(env.VERSION_GRACE_SECONDS) + hours * 3600) * 1000);
    const publishVeiled = async (csv: string) => {
      const n = await upload(t, 'veiled-sweep', csv);
      await buildAndWait(t, 'veiled-sweep', n, 'veiled');
      expect((await post(t, `/v1/admin/datasets/veiled-sweep/versions/${n}/publish`)).status).toBe(200);
      return `matrices/${(await client.manifest('veiled-sweep')).partition!.contentHash}.nvm`;
    };
    await publishDataset(t, 'veiled-sweep', tinyZipCsv(5), 'veiled');
    const shared = `matrices/${(await client.manifest('veiled-sweep')).partition!.contentHash}.nvm`;
    // Five and six nearby ZIP codes fall into the same coarse cells: one partition blob for both.
    expect(await publishVeiled(tinyZipCsv(6))).toBe(shared);
    const first = await sweepVersions(apiEnv, later(2));
    const datasetId = (await findDataset(database(apiEnv), t.tenantId, 'veiled-sweep')).id;
    expect(first.retired).toContainEqual({ datasetId, version: 1 });
    expect(first.deletedBlobs).not.toContain(shared);
    expect(await env.BLOBS.head(shared)).not.toBeNull();
    const own = await publishVeiled(rhodeIslandZipCsv().csv);
    expect(own).not.toBe(shared);
    const second = await sweepVersions(apiEnv, later(4));
    expect(second.deletedBlobs).toContain(shared);
    expect(await env.BLOBS.head(shared)).toBeNull();
    expect(await env.BLOBS.head(own)).not.toBeNull();
  });

  it('rollback without a version walks back one published version at a time; bad targets are refused', async () => {
    await publishDataset(t, 'walk', tinyZipCsv(4));
    for (const size of [5, 6]) {
      const n = await upload(t, 'walk', tinyZipCsv(size));
      await buildAndWait(t, 'walk', n);
      expect((await post(t, `/v1/admin/datasets/walk/versions/${n}/publish`)).status).toBe(200);
    }
    expect(await (await post(t, '/v1/admin/datasets/walk/rollback')).json()).toMatchObject({ activeVersion: 2, previousVersion: 3 });
    expect(await (await post(t, '/v1/admin/datasets/walk/rollback')).json()).toMatchObject({ activeVersion: 1, previousVersion: 2 });
    const none = await post(t, '/v1/admin/datasets/walk/rollback');
    expect(none.status).toBe(409);
    expect(await none.json()).toMatchObject({ error: { code: 'no_earlier_version' } });
    expect(await (await post(t, '/v1/admin/datasets/walk/rollback', { toVersion: 3 })).json()).toMatchObject({ activeVersion: 3, previousVersion: 1 });
    for (const [body, status, code] of [[{ toVersion: 3 }, 409, 'version_active'], [{ toVersion: 99 }, 404, 'version_unknown'], [{ toVersion: 'two' }, 400, 'invalid_body'], [{ to: 1 }, 400, 'invalid_body']] as const) {
      const res = await post(t, '/v1/admin/datasets/walk/rollback', body);
      expect(res.status).toBe(status);
      expect(await res.json()).toMatchObject({ error: { code } });
    }
  });

  it('concurrent publishes leave exactly one active version, the one the pointer names', async () => {
    await publishDataset(t, 'race', tinyZipCsv(4));
    const numbers: number[] = [];
    for (const size of [5, 6, 7]) {
      const n = await upload(t, 'race', tinyZipCsv(size));
      await buildAndWait(t, 'race', n);
      numbers.push(n);
    }
    const results = await Promise.all(numbers.map((n) => post(t, `/v1/admin/datasets/race/versions/${n}/publish`)));
    expect(results.map((r) => r.status)).toEqual([200, 200, 200]);
    const list = (await (await adminRequest(t, 'GET', '/v1/admin/datasets/race/versions')).json()) as { activeVersion: number; versions: VersionBody[] };
    const active = list.versions.filter((v) => v.state === 'active');
    expect(active.map((v) => v.version)).toEqual([list.activeVersion]);
    // Every other published version is in its grace period, none was lost.
    expect(list.versions.filter((v) => v.state === 'ready').length).toBe(3);
  });
});
