import { beforeAll, describe, expect, it } from 'vitest';
import { jacobi } from '../../core/bigint/jacobi.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { adminRequest, appRequest, BASE, buildAndWait, createTestTenant, publishDataset, registeredKey, storedState, type TestTenant, waitForVersion, worker } from './tenant-fixture.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';

/** Sends a bad request and checks: the status, a JSON error naming code and field, and no stored change. */
async function expectRefused(send: () => Promise<Response>, status: number, code: string, field?: string) {
  const before = await storedState();
  const res = await send();
  const body = (await res.json()) as { error: { code: string; message: string; field?: string } };
  expect({ status: res.status, code: body.error.code }).toEqual({ status, code });
  expect(body.error.message.length).toBeGreaterThan(10);
  if (field !== undefined) expect(body.error.field).toBe(field);
  expect(await storedState()).toBe(before);
  return body.error;
}

describe('bad input gets a clear 4xx JSON error and changes nothing stored', () => {
  let t: TestTenant;
  let key: PirKeyPair;
  let columns: number;
  const queryPath = '/v1/datasets/ri-zips/versions/1/query';

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-zips', rhodeIslandZipCsv().csv);
    key = await registeredKey(t);
    const manifest = (await (await appRequest(t, 'GET', '/v1/datasets/ri-zips/manifest')).json()) as { matrix: { columns: number } };
    columns = manifest.matrix.columns;
  });

  const send = (values: bigint[], n = key.n) => () => appRequest(t, 'POST', queryPath, encodeQuery(n, values));

  it('refuses a wrong number of values', async () => {
    const values = makeQuery(key, columns, 0);
    await expectRefused(send(values.slice(1)), 400, 'value_count', 'values');
  });

  it('refuses a value y >= N', async () => {
    const values = makeQuery(key, columns, 0);
    values[1] = key.n + 2n;
    await expectRefused(send(values), 400, 'value_range', 'values[1]');
  });

  it('refuses a value whose Jacobi symbol is -1', async () => {
    const values = makeQuery(key, columns, 0);
    let y = 2n;
    while (jacobi(y, key.n) !== -1) y++;
    values[columns - 1] = y;
    await expectRefused(send(values), 400, 'value_jacobi', `values[${columns - 1}]`);
  });

  it('refuses an even modulus and a too-short modulus', async () => {
    const values = makeQuery(key, columns, 0);
    await expectRefused(send(values, key.n + 1n), 400, 'modulus_even', 'modulus');
    const short = (1n << 1023n) + 1n;
    await expectRefused(send(values.map(() => 4n), short), 400, 'modulus_size', 'modulus');
  });

  it('refuses a malformed body', async () => {
    const good = encodeQuery(key.n, makeQuery(key, columns, 0));
    await expectRefused(() => appRequest(t, 'POST', queryPath, good.slice(0, good.length - 7)), 400, 'wire_format', 'body');
    const wrongMagic = good.slice();
    wrongMagic[0] = 0x41;
    await expectRefused(() => appRequest(t, 'POST', queryPath, wrongMagic), 400, 'wire_format', 'body');
  });

  it('refuses a query body over the size the version allows, before reading it whole', async () => {
    const oversized = new Uint8Array(10 + 384 * (columns + 1) + 1);
    await expectRefused(() => appRequest(t, 'POST', queryPath, oversized), 413, 'body_too_large', 'body');
  });

  it('refuses an unknown dataset, an unknown version and an unpublished version', async () => {
    const body = encodeQuery(key.n, makeQuery(key, columns, 0));
    await expectRefused(() => appRequest(t, 'POST', '/v1/datasets/no-such-set/versions/1/query', body), 404, 'dataset_unknown', 'dataset');
    await expectRefused(() => appRequest(t, 'POST', '/v1/datasets/ri-zips/versions/99/query', body), 404, 'version_unknown', 'version');
    await expectRefused(() => appRequest(t, 'GET', '/v1/datasets/ri-zips/manifest?version=zero'), 400, 'invalid_version', 'version');
    const up = await adminRequest(t, 'POST', '/v1/admin/datasets/ri-zips/versions', 'id,lat,lon\na,41.5,-71.5\n', 'text/csv');
    const { version } = (await up.json()) as { version: number };
    await expectRefused(() => appRequest(t, 'POST', `/v1/datasets/ri-zips/versions/${version}/query`, body), 410, 'version_not_served', 'version');
  });

  it('refuses a missing, unknown, wrong-kind or revoked credential', async () => {
    await expectRefused(() => worker(`${BASE}/v1/datasets/ri-zips/manifest`), 401, 'credential_missing', 'authorization');
    await expectRefused(
      () => worker(`${BASE}/v1/datasets/ri-zips/manifest`, { headers: { authorization: 'Bearer nvk_not-a-real-key' } }),
      403, 'credential_unknown', 'authorization');
    await expectRefused(
      () => worker(`${BASE}/v1/datasets/ri-zips/manifest`, { headers: { authorization: `Bearer ${t.adminToken}` } }),
      403, 'credential_wrong_kind', 'authorization');
    const other = await createTestTenant();
    const revoke = await adminRequest(other, 'POST', `/v1/admin/keys/${other.apiKeyId}/revoke`);
    expect(revoke.status).toBe(200);
    await expectRefused(() => appRequest(other, 'GET', '/v1/datasets/ri-zips/manifest'), 403, 'credential_revoked', 'authorization');
  });

  it('refuses a malformed site table, naming row and column, and adds no version', async () => {
    const csv = 'id,lat,lon,name\nok-1,41.5,-71.5,Fine\nbad-2,123,-71.5,Too far north\nbad-3,41.5,,No longitude\n';
    const error = await expectRefused(
      () => adminRequest(t, 'POST', '/v1/admin/datasets/ri-zips/versions', csv, 'text/csv'),
      400, 'site_table', 'file');
    const details = (error as unknown as { details: Array<{ row: number; column: string }> }).details;
    expect(details).toEqual(expect.arrayContaining([expect.objectContaining({ row: 3, column: 'lat' }), expect.objectContaining({ row: 4, column: 'lon' })]));
    await expectRefused(() => adminRequest(t, 'POST', '/v1/admin/datasets/ri-zips/versions', 'name\nx\n', 'text/csv'), 400, 'site_table', 'file');
    await expectRefused(() => adminRequest(t, 'POST', '/v1/admin/datasets/ri-zips/versions', csv, 'application/json'), 415, 'content_type', 'content-type');
  });

  it('refuses an unknown layout or maxK for a build, and builds the layout and k asked for', async () => {
    const up = await adminRequest(t, 'POST', '/v1/admin/datasets/ri-zips/versions', rhodeIslandZipCsv().csv, 'text/csv');
    const { version } = (await up.json()) as { version: number };
    await expectRefused(() => adminRequest(t, 'POST', `/v1/admin/datasets/ri-zips/versions/${version}/build?layout=hexagons`), 400, 'invalid_layout', 'layout');
    for (const maxK of ['0', '9', '2.5', 'three']) {
      await expectRefused(() => adminRequest(t, 'POST', `/v1/admin/datasets/ri-zips/versions/${version}/build?maxK=${maxK}`), 400, 'invalid_max_k', 'maxK');
    }
    const forThree = await adminRequest(t, 'POST', `/v1/admin/datasets/ri-zips/versions/${version}/build?maxK=3`);
    expect(forThree.status).toBe(202);
    expect((await waitForVersion(t, 'ri-zips', version)).maxK).toBe(3);
    for (const [layout, kind] of [['grid', 'grid'], ['adaptive', 'adaptive']] as const) {
      const next = await adminRequest(t, 'POST', '/v1/admin/datasets/ri-zips/versions', rhodeIslandZipCsv().csv, 'text/csv');
      const n = ((await next.json()) as { version: number }).version;
      const built = await buildAndWait(t, 'ri-zips', n, layout);
      expect(built.layout).toBe(kind);
    }
  });

  it('refuses a bad dataset slug and an over-long JSON body', async () => {
    await expectRefused(() => adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug: 'Not A Slug' }), 'application/json'), 400, 'invalid_body', 'slug');
    await expectRefused(() => adminRequest(t, 'POST', '/v1/admin/datasets', '{nope', 'application/json'), 400, 'invalid_json', 'body');
    const big = JSON.stringify({ slug: 'x', name: 'n'.repeat(20_000) });
    await expectRefused(() => adminRequest(t, 'POST', '/v1/admin/datasets', big, 'application/json'), 413, 'body_too_large', 'body');
    await expectRefused(() => adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug: 'ri-zips' }), 'application/json'), 409, 'dataset_exists', 'slug');
  });
});
