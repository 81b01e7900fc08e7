import { createExecutionContext, createMessageBatch, env, getQueueResult } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { markQueued } from '../../api/builds/queue-build.ts';
import { consumeBuilds } from '../../api/builds/consume-builds.ts';
import { database } from '../../api/db/client.ts';
import { findDatasetWithHistory, findVersion } from '../../api/datasets/repository.ts';
import { sweepVersions } from '../../api/datasets/retire-versions.ts';
import type { Env } from '../../api/env.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { connect } from '../../sdk/client.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { rhodeIslandZipCsv, tinyZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, BASE, createTestTenant, publishDataset, storedState, worker, type TestTenant } from './tenant-fixture.ts';
import { createTestUser, jsonRequest, sessionRequest, signIn, type TestSession } from './user-fixture.ts';

const apiEnv = env as unknown as Env;
const json = (t: TestTenant, method: string, path: string, body?: unknown) =>
  adminRequest(t, method, path, body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body), body === undefined ? undefined : 'application/json');

async function expectRefused(res: Response, status: number, code: string, field: string): Promise<string> {
  const body = (await res.json()) as { error?: { code: string; field?: string; message: string } };
  expect({ status: res.status, code: body.error?.code, field: body.error?.field }).toEqual({ status, code, field });
  return body.error!.message;
}

/** Every blob a built version points at, read from D1 and its manifest: table, manifest, cell matrix, details matrix, sealed file. */
async function blobsOf(t: TestTenant, slug: string, number: number): Promise<string[]> {
  const db = database(apiEnv);
  const v = await findVersion(db, await findDatasetWithHistory(db, t.tenantId, slug), number);
  const manifest = JSON.parse((await (await env.BLOBS.get(v.manifestKey!))!.text())) as { details: { sealedHash: string; matrix: { contentHash: string } } };
  return [v.tableKey, v.manifestKey!, v.matrixKey!, `matrices/${manifest.details.matrix.contentHash}.nvm`, `sealed/${manifest.details.sealedHash}.nvs`];
}

const present = async (keys: string[]) => (await Promise.all(keys.map(async (k) => ((await env.BLOBS.head(k)) === null ? null : k)))).filter((k) => k !== null);

describe('renaming and deleting datasets', () => {
  let a: TestTenant;
  let b: TestTenant;
  let other: TestTenant;
  let editorA: TestSession;
  let key: PirKeyPair;
  const sites = rhodeIslandZipCsv().sites.slice(0, 12);
  const csv = ['id,lat,lon', ...sites.map((s) => `${s.id},${s.lat},${s.lon}`)].join('\n');

  beforeAll(async () => {
    [a, b, other] = [await createTestTenant(), await createTestTenant(), await createTestTenant()];
    editorA = await signIn(await createTestUser(a.tenantId, 'tenant_editor'));
    key = await generateKeyPair({ modulusBits: 2048 });
    await publishDataset(a, 'clinics', csv);
    await publishDataset(b, 'clinics', csv);
  });

  it('renames: an editor changes the name people read, the slug and the answers stay, the audit keeps both names', async () => {
    const res = await jsonRequest(editorA, 'PATCH', '/v1/admin/datasets/clinics', { name: '  Walk-in clinics (winter hours)  ' });
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ slug: 'clinics', name: 'Walk-in clinics (winter hours)', activeVersion: 1 });
    const listed = (await (await json(a, 'GET', '/v1/admin/datasets')).json()) as { datasets: Array<{ slug: string; name: string }> };
    expect(listed.datasets).toEqual([expect.objectContaining({ slug: 'clinics', name: 'Walk-in clinics (winter hours)' })]);
    const audit = (await (await json(a, 'GET', '/v1/admin/audit')).json()) as { events: Array<{ action: string; target: string; detail: unknown }> };
    expect(audit.events[0]).toMatchObject({ action: 'dataset.rename', target: 'dataset clinics', detail: { from: 'clinics', to: 'Walk-in clinics (winter hours)' } });
    // Apps keep using the slug: the nearest site is still the one geokdbush (npm) finds.
    const client = connect({ endpoint: BASE, apiKey: a.apiKey, keyPair: key, fetch: (r) => worker(r) });
    expect((await client.nearest('clinics', { lat: 41.83, lon: -71.41 })).results[0]!.id).toBe(geokdbushNearest(sites, 41.83, -71.41).id);
  });

  it('refuses a bad rename with a 4xx naming the field, and changes nothing', async () => {
    const before = await storedState();
    const path = '/v1/admin/datasets/clinics';
    await expectRefused(await json(a, 'PATCH', path, { name: '   ' }), 400, 'invalid_body', 'name');
    await expectRefused(await json(a, 'PATCH', path, { name: 'two\nlines' }), 400, 'invalid_body', 'name');
    await expectRefused(await json(a, 'PATCH', path, { name: 'n'.repeat(201) }), 400, 'invalid_body', 'name');
    await expectRefused(await json(a, 'PATCH', path, { name: 42 }), 400, 'invalid_body', 'name');
    await expectRefused(await json(a, 'PATCH', path, {}), 400, 'invalid_body', 'name');
    await expectRefused(await json(a, 'PATCH', path, ''), 400, 'invalid_json', 'body');
    await expectRefused(await json(a, 'PATCH', path, '{name'), 400, 'invalid_json', 'body');
    expect(await expectRefused(await json(a, 'PATCH', path, { slug: 'clinics-2', name: 'x' }), 400, 'slug_fixed', 'slug')).toMatch(/apps use "clinics" in their URLs/);
    await expectRefused(await json(a, 'PATCH', '/v1/admin/datasets/Not%20A%20Slug', { name: 'x' }), 400, 'invalid_dataset', 'dataset');
    await expectRefused(await json(a, 'PATCH', '/v1/admin/datasets/nowhere', { name: 'x' }), 404, 'dataset_unknown', 'dataset');
    await expectRefused(await json(a, 'PATCH', path, JSON.stringify({ name: 'n'.repeat(5000) })), 413, 'body_too_large', 'body');
    expect(await storedState()).toBe(before);
  });

  it("never reaches another tenant's dataset, and editors may not delete", async () => {
    const before = await storedState();
    // Tenant b has its own "clinics"; a's token only ever acts on a's.
    await expectRefused(await json(a, 'DELETE', `/v1/admin/datasets/clinics?tenant=${b.slug}`, { confirm: 'clinics' }), 403, 'tenant_forbidden', 'tenant');
    await expectRefused(await json(a, 'PATCH', `/v1/admin/datasets/clinics?tenant=${b.slug}`, { name: 'taken over' }), 403, 'tenant_forbidden', 'tenant');
    await expectRefused(await json(other, 'DELETE', '/v1/admin/datasets/clinics', { confirm: 'clinics' }), 404, 'dataset_unknown', 'dataset');
    await expectRefused(await jsonRequest(editorA, 'DELETE', '/v1/admin/datasets/clinics', { confirm: 'clinics' }), 403, 'role_forbidden', 'role');
    await expectRefused(await sessionRequest(editorA, 'DELETE', '/v1/admin/datasets/clinics', { body: JSON.stringify({ confirm: 'clinics' }), contentType: 'application/json', csrf: null }), 403, 'csrf_missing', 'x-nearveil-csrf');
    expect((await (await json(b, 'GET', '/v1/admin/datasets')).json()) as unknown).toMatchObject({ datasets: [{ slug: 'clinics', name: 'clinics' }] });
    expect(await storedState()).toBe(before);
  });

  it('refuses to delete a dataset with an active version unless the request names its slug', async () => {
    const before = await storedState();
    const message = await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics'), 409, 'confirmation_required', 'confirm');
    expect(message).toBe('confirm: dataset "clinics" has an active version (v1) that apps may be using; to delete it anyway, send {"confirm": "clinics"}');
    await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics', {}), 409, 'confirmation_required', 'confirm');
    await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics', { confirm: 'clinic' }), 400, 'confirmation_mismatch', 'confirm');
    await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics', { confirm: true }), 400, 'invalid_body', 'confirm');
    await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics', { confirm: 'clinics', force: true }), 400, 'invalid_body', 'body');
    await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics', 'yes'), 400, 'invalid_json', 'body');
    expect(await storedState()).toBe(before);
    expect((await appRequest(a, 'GET', '/v1/datasets/clinics/manifest')).status).toBe(200);
  });

  it('deletes on confirmation: answers stop at once (404 dataset_deleted), usage and statements keep their history, the slug is not reused', async () => {
    const client = connect({ endpoint: BASE, apiKey: a.apiKey, keyPair: key, fetch: (r) => worker(r) });
    for (const [lat, lon] of [[41.7, -71.5], [41.9, -71.3]] as const) {
      expect((await client.nearest('clinics', { lat, lon })).results[0]!.id).toBe(geokdbushNearest(sites, lat, lon).id);
    }
    const month = new Date().toISOString().slice(0, 7);
    const usageBefore = (await (await json(a, 'GET', `/v1/admin/usage?dataset=clinics&month=${month}`)).json()) as { totals: { queries: number } };
    expect(usageBefore.totals.queries).toBe(3);
    const manifest = (await (await appRequest(a, 'GET', '/v1/datasets/clinics/manifest')).json()) as { matrix: { columns: number } };

    const res = await json(a, 'DELETE', '/v1/admin/datasets/clinics', { confirm: 'clinics' });
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ dataset: 'clinics', name: 'Walk-in clinics (winter hours)', activeVersion: 1 });

    expect(((await (await json(a, 'GET', '/v1/admin/datasets')).json()) as { datasets: unknown[] }).datasets).toEqual([]);
    await expectRefused(await appRequest(a, 'GET', '/v1/datasets/clinics/manifest'), 404, 'dataset_deleted', 'dataset');
    await expectRefused(await appRequest(a, 'GET', '/v1/datasets/clinics/manifest?version=1'), 404, 'dataset_deleted', 'dataset');
    // The dataset is refused before the query is read: no modulus, no quota slot involved.
    await expectRefused(await appRequest(a, 'POST', '/v1/datasets/clinics/versions/1/query', encodeQuery(key.n, makeQuery(key, manifest.matrix.columns, 0))), 404, 'dataset_deleted', 'dataset');
    await expectRefused(await appRequest(a, 'GET', '/v1/datasets/clinics/versions/1/details/sealed'), 404, 'dataset_deleted', 'dataset');
    await expect(client.nearest('clinics', { lat: 41.7, lon: -71.5 })).rejects.toMatchObject({ code: 'dataset_deleted' });
    await expectRefused(await json(a, 'GET', '/v1/admin/datasets/clinics/versions'), 404, 'dataset_deleted', 'dataset');
    await expectRefused(await adminRequest(a, 'POST', '/v1/admin/datasets/clinics/versions', csv, 'text/csv'), 404, 'dataset_deleted', 'dataset');
    await expectRefused(await json(a, 'PATCH', '/v1/admin/datasets/clinics', { name: 'back again' }), 404, 'dataset_deleted', 'dataset');
    await expectRefused(await json(a, 'DELETE', '/v1/admin/datasets/clinics', { confirm: 'clinics' }), 404, 'dataset_deleted', 'dataset');
    expect(await expectRefused(await json(a, 'POST', '/v1/admin/datasets', { slug: 'clinics' }), 409, 'slug_retired', 'slug')).toMatch(/never given to another dataset/);
    await expectRefused(await json(a, 'POST', '/v1/admin/keys', { label: 'late app', datasets: ['clinics'] }), 404, 'dataset_unknown', 'datasets.0');
    // Tenant b's dataset of the same slug is untouched.
    expect((await connect({ endpoint: BASE, apiKey: b.apiKey, keyPair: key, fetch: (r) => worker(r) }).nearest('clinics', { lat: 41.7, lon: -71.5 })).version).toBe(1);

    // History: the three answered queries stay in the usage report (by slug and in total) and in the statement.
    const usageAfter = (await (await json(a, 'GET', `/v1/admin/usage?dataset=clinics&month=${month}`)).json()) as { totals: { queries: number; rejected: number } };
    expect(usageAfter.totals.queries).toBe(3);
    expect(((await (await json(a, 'GET', `/v1/admin/usage?month=${month}`)).json()) as { totals: { queries: number } }).totals.queries).toBe(3);
    await env.DB.prepare('INSERT INTO tariffs (tenant_id, from_month, query_micros, gb_micros, million_multiplications_micros, monthly_base_micros, set_by) VALUES (?, ?, 1000, 0, 0, 0, ?)').bind(a.tenantId, month, 'test').run();
    const statement = (await (await json(a, 'GET', `/v1/admin/statements/${month}`)).json()) as { usage: { queries: number } };
    expect(statement.usage.queries).toBe(3);

    const audit = (await (await json(a, 'GET', '/v1/admin/audit')).json()) as { events: Array<{ action: string; target: string; detail: unknown }> };
    expect(audit.events[0]).toMatchObject({ action: 'dataset.delete', target: 'dataset clinics', detail: { name: 'Walk-in clinics (winter hours)', activeVersion: 1, confirmed: true } });
  });

  it('deletes a dataset that was never published without a confirmation', async () => {
    expect((await json(a, 'POST', '/v1/admin/datasets', { slug: 'trial-run', name: 'Trial run' })).status).toBe(201);
    expect((await adminRequest(a, 'POST', '/v1/admin/datasets/trial-run/versions', tinyZipCsv(3), 'text/csv')).status).toBe(201);
    const res = await json(a, 'DELETE', '/v1/admin/datasets/trial-run');
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ dataset: 'trial-run', activeVersion: null });
  });

  it('leaves the blobs to the sweep: fresh ones wait, later ones go, and a table another dataset shares stays', async () => {
    // Same table bytes in two datasets: one content-addressed blob, shared.
    await publishDataset(a, 'kept', csv);
    await publishDataset(a, 'doomed', csv);
    const doomed = await blobsOf(a, 'doomed', 1);
    const kept = await blobsOf(a, 'kept', 1);
    expect(doomed[0]).toBe(kept[0]);
    expect(await present(doomed)).toEqual(doomed);
    expect((await json(a, 'DELETE', '/v1/admin/datasets/doomed', { confirm: 'doomed' })).status).toBe(200);
    const id = (await findDatasetWithHistory(database(apiEnv), a.tenantId, 'doomed')).id;

    // Nothing is deleted inline, nor by a sweep within the hour (a build may be about to use a blob).
    // Its versions retire at the first sweep (the one after the delete, or this one), though.
    const soon = await sweepVersions(apiEnv, new Date());
    expect(soon.collectedDatasets).not.toContain(id);
    expect(await env.DB.prepare('SELECT state FROM versions WHERE dataset_id = ?').bind(id).first('state')).toBe('retired');
    expect(await present(doomed)).toEqual(doomed);

    const later = await sweepVersions(apiEnv, new Date(Date.now() + 2 * 3600 * 1000));
    expect(later.collectedDatasets).toContain(id);
    // Its own blobs (manifest, details matrix, sealed file) are gone; the table and cell matrix
    // "kept" holds the same bytes of stay, as do kept's own.
    const shared = doomed.filter((k) => kept.includes(k));
    expect(shared).toEqual([doomed[0], doomed[2]]);
    expect(await present(doomed)).toEqual(shared);
    expect(await present(kept)).toEqual(kept);
    const row = await env.DB.prepare('SELECT state, details_secret FROM versions WHERE dataset_id = ?').bind(id).first<{ state: string; details_secret: string | null }>();
    expect(row).toEqual({ state: 'retired', details_secret: null });
    // "kept" still answers with the site geokdbush (npm) finds nearest.
    const client = connect({ endpoint: BASE, apiKey: a.apiKey, keyPair: key, fetch: (r) => worker(r) });
    expect((await client.nearest('kept', { lat: 41.6, lon: -71.45 })).results[0]!.id).toBe(geokdbushNearest(sites, 41.6, -71.45).id);
    // A collected dataset is not visited again.
    expect((await sweepVersions(apiEnv, new Date(Date.now() + 3 * 3600 * 1000))).collectedDatasets).not.toContain(id);
  });

  it('does not build a version whose dataset was deleted while its build waited in the queue', async () => {
    expect((await json(a, 'POST', '/v1/admin/datasets', { slug: 'queued-away' })).status).toBe(201);
    expect((await adminRequest(a, 'POST', '/v1/admin/datasets/queued-away/versions', tinyZipCsv(4), 'text/csv')).status).toBe(201);
    const db = database(apiEnv);
    const dataset = await findDatasetWithHistory(db, a.tenantId, 'queued-away');
    await markQueued(db, dataset, await findVersion(db, dataset, 1), 'auto');
    expect((await json(a, 'DELETE', '/v1/admin/datasets/queued-away')).status).toBe(200);
    const batch = createMessageBatch('nearveil-builds', [{ id: 'm-deleted', timestamp: new Date(), attempts: 1, body: { datasetId: dataset.id, version: 1, layout: 'auto' } }]);
    await consumeBuilds(batch, apiEnv);
    await getQueueResult(batch, createExecutionContext());
    const v = await findVersion(db, dataset, 1);
    expect({ state: v.state, error: v.error, matrixKey: v.matrixKey, manifestKey: v.manifestKey }).toEqual({ state: 'failed', error: 'not built: the dataset was deleted', matrixKey: null, manifestKey: null });
  });
});
