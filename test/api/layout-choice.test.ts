import { beforeAll, describe, expect, it } from 'vitest';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { adminRequest, buildAndWait, createTestTenant, type TestTenant } from './tenant-fixture.ts';

/**
 * Invented: 2,000 sites packed into one town a kilometre across and two far-off ones, the shape
 * that defeats a uniform grid (every grid cell around the town holds all 2,000, so each list is
 * 2,000 long and the matrix needs over 100 MiB to answer from).
 */
function oneTownCsv(): string {
  const random = seededRandom(3);
  const lines = ['id,lat,lon'];
  for (let i = 0; i < 2000; i++) lines.push(`c${i},${(10 + (random() - 0.5) * 0.01).toFixed(6)},${(20 + (random() - 0.5) * 0.01).toFixed(6)}`);
  lines.push('far1,30,50', 'far2,-10,0');
  return lines.join('\n') + '\n';
}

describe('one decision for the layout: refused before queueing when a named layout cannot fit, explained when built', () => {
  let t: TestTenant;
  let version: number;
  beforeAll(async () => {
    t = await createTestTenant();
    await adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug: 'one-town' }), 'application/json');
    const up = await adminRequest(t, 'POST', '/v1/admin/datasets/one-town/versions', oneTownCsv(), 'text/csv');
    version = ((await up.json()) as { version: number }).version;
  });

  it('refuses layout=grid at once (422 matrix_too_large, with advice) and leaves the version a draft', async () => {
    const res = await adminRequest(t, 'POST', `/v1/admin/datasets/one-town/versions/${version}/build?layout=grid`);
    expect(res.status).toBe(422);
    const body = (await res.json()) as { error: { code: string; field: string; message: string } };
    expect(body.error).toMatchObject({ code: 'matrix_too_large', field: 'layout' });
    expect(body.error.message).toMatch(/^no grid layout fits: the smallest, grid \d+ x \d+, needs at least a \d+ x \d+ matrix, and answering from it takes \d+ MiB, more than the 64 MiB/);
    expect(body.error.message).toMatch(/build with layout auto or adaptive/);
    const row = (await (await adminRequest(t, 'GET', `/v1/admin/datasets/one-town/versions/${version}`)).json()) as { state: string };
    expect(row.state).toBe('draft');
  });

  it('builds the same table with layout auto, choosing a layout that fits and saying why', async () => {
    const built = await buildAndWait(t, 'one-town', version);
    expect(built.layout).toBe('adaptive');
    expect(built.layoutReason).toMatch(/^adaptive, lists <= \d+ \([0-9.]+ s per query by the cost model\) of \d+ layouts weighed: .*\d+ were too large to answer from/);
  });
});
