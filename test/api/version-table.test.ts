import { describe, expect, it } from 'vitest';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { ManifestSchema } from '../../core/geo/manifest.ts';
import { adminRequest, createTestTenant, publishDataset, storedState } from './tenant-fixture.ts';

// Invented sites of an invented valley; the CSV keeps its quoting, BOM-free, exactly as uploaded.
const CSV = 'id,name,lat,lon,phone\nq1,"Fenwick Rise, clinic",51.5,-0.12,0100\nq2,Orrin Ford,51.6,-0.2,\n';

describe('GET /v1/admin/datasets/:dataset/versions/:version/table and /manifest', () => {
  it('returns the stored site table byte for byte and the built manifest', async () => {
    const t = await createTestTenant();
    const version = await publishDataset(t, 'fenwick', CSV);
    const table = await adminRequest(t, 'GET', `/v1/admin/datasets/fenwick/versions/${version}/table`);
    expect(table.status).toBe(200);
    expect(table.headers.get('content-type')).toMatch(/^text\/csv/);
    const text = await table.text();
    expect(text).toBe(CSV);
    expect(parseSiteTable(text).sites.map((s) => s.id)).toEqual(['q1', 'q2']);
    const manifest = await adminRequest(t, 'GET', `/v1/admin/datasets/fenwick/versions/${version}/manifest`);
    expect(manifest.status).toBe(200);
    const parsed = ManifestSchema.parse(await manifest.json());
    expect(parsed.siteIds).toEqual(['q1', 'q2']);
    expect(parsed.version).toBe(version);
  });

  it('refuses unknown versions, other tenants and unbuilt manifests with clear errors', async () => {
    const t = await createTestTenant();
    const other = await createTestTenant();
    await publishDataset(t, 'fenwick', CSV);
    const before = await storedState();
    const unknown = await adminRequest(t, 'GET', '/v1/admin/datasets/fenwick/versions/9/table');
    expect(unknown.status).toBe(404);
    expect(await unknown.json()).toMatchObject({ error: { code: 'version_unknown', field: 'version' } });
    const bad = await adminRequest(t, 'GET', '/v1/admin/datasets/fenwick/versions/x/table');
    expect(bad.status).toBe(400);
    expect(await bad.json()).toMatchObject({ error: { code: 'invalid_version', field: 'version' } });
    const foreign = await adminRequest(other, 'GET', '/v1/admin/datasets/fenwick/versions/1/table');
    expect(foreign.status).toBe(404);
    expect(await foreign.json()).toMatchObject({ error: { code: 'dataset_unknown' } });
    const draft = await adminRequest(t, 'POST', '/v1/admin/datasets/fenwick/versions', CSV, 'text/csv');
    const { version } = (await draft.json()) as { version: number };
    const unbuilt = await adminRequest(t, 'GET', `/v1/admin/datasets/fenwick/versions/${version}/manifest`);
    expect(unbuilt.status).toBe(409);
    expect(await unbuilt.json()).toMatchObject({ error: { code: 'version_state', field: 'version' } });
    const noAuth = await adminRequest({ ...t, adminToken: '' }, 'GET', '/v1/admin/datasets/fenwick/versions/1/table');
    expect(noAuth.status).toBe(401);
    // Reading never writes: only the draft upload above changed the stored state.
    const after = await storedState();
    expect(after).not.toBe(before);
    const draftTable = await adminRequest(t, 'GET', `/v1/admin/datasets/fenwick/versions/${version}/table`);
    expect(await draftTable.text()).toBe(CSV);
    expect(await storedState()).toBe(after);
  });
});
