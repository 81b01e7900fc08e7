import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { monthDays, secondsToNextMonth } from '../../api/metering/calendar.ts';
import { adminRequest, appRequest, createTestTenant, publishDataset, registeredKey, type TestTenant } from './tenant-fixture.ts';
import { tinyZipCsv } from './open-data-sites.ts';

interface UsageBody {
  tenant: string;
  month: string;
  totals: { queries: number; rejected: number; bytesIn: number; bytesOut: number; multiplications: number };
  days: Array<{ day: string; queries: number; rejected: number }>;
}

describe('metering: exact under concurrency, refusals counted apart', () => {
  let t: TestTenant;
  let pir: PirKeyPair;
  let columns: number;
  let products: number;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'meter-tiny', tinyZipCsv(6));
    pir = await registeredKey(t);
    const manifest = (await (await appRequest(t, 'GET', '/v1/datasets/meter-tiny/manifest')).json()) as { matrix: { columns: number; plan: { products: number } } };
    columns = manifest.matrix.columns;
    products = manifest.matrix.plan.products;
  });

  it('counts 200 concurrent answered queries as exactly 200, and 12 refused ones apart', async () => {
    const good = Array.from({ length: 200 }, (_, i) => encodeQuery(pir.n, makeQuery(pir, columns, i % columns)));
    const bad = Array.from({ length: 10 }, () => encodeQuery(pir.n, makeQuery(pir, columns, 0).map((y, j) => (j === 0 ? pir.n + 2n : y))));
    const sends = [
      ...good.map((b) => appRequest(t, 'POST', '/v1/datasets/meter-tiny/versions/1/query', b)),
      ...bad.map((b) => appRequest(t, 'POST', '/v1/datasets/meter-tiny/versions/1/query', b)),
      appRequest(t, 'POST', '/v1/datasets/meter-tiny/versions/9/query', good[0]),
      appRequest(t, 'POST', '/v1/datasets/no-such-set/versions/1/query', good[0]),
    ];
    const responses = await Promise.all(sends);
    const statuses = responses.map((r) => r.status);
    const answers = await Promise.all(responses.map((r) => r.arrayBuffer()));
    expect(statuses.filter((s) => s === 200).length).toBe(200);
    expect(statuses.slice(200)).toEqual([...Array(10).fill(400), 404, 404]);

    const res = await adminRequest(t, 'GET', '/v1/admin/usage?dataset=meter-tiny');
    expect(res.status).toBe(200);
    const usage = (await res.json()) as UsageBody;
    const bytesIn = good.reduce((s, b) => s + b.length, 0);
    const bytesOut = answers.slice(0, 200).reduce((s, a) => s + a.byteLength, 0);
    expect(usage.totals).toEqual({ queries: 200, rejected: 11, bytesIn, bytesOut, multiplications: 200 * products });
    // The unknown dataset is not "meter-tiny": it shows in the tenant-wide report only.
    const all = (await (await adminRequest(t, 'GET', '/v1/admin/usage')).json()) as UsageBody;
    expect(all.totals.rejected).toBe(12);
    expect(all.days.map((d) => d.day)).toEqual([new Date().toISOString().slice(0, 10)]);

    // The report is the plain sum of the stored daily rows (per key, dataset, version and day).
    const rows = await env.DB.prepare(
      'SELECT SUM(u.queries) AS q, SUM(u.bytes_in) AS i, SUM(u.bytes_out) AS o, SUM(u.multiplications) AS m FROM usage_daily u JOIN datasets d ON d.id = u.dataset_id WHERE d.tenant_id = ?',
    ).bind(t.tenantId).first<{ q: number; i: number; o: number; m: number }>();
    expect(rows).toEqual({ q: 200, i: bytesIn, o: bytesOut, m: 200 * products });
    const reasons = await env.DB.prepare('SELECT reason, SUM(queries) AS n FROM rejections_daily WHERE tenant_id = ? GROUP BY reason ORDER BY reason').bind(t.tenantId).all();
    expect(reasons.results).toEqual([
      { reason: 'dataset_unknown', n: 1 },
      { reason: 'value_range', n: 10 },
      { reason: 'version_unknown', n: 1 },
    ]);
  });

  it('meters a 3072-bit query at twice its products: the unit is the 2048-bit product (PRODUCT_WEIGHT)', async () => {
    const wide = await registeredKey(t, { modulusBits: 3072 });
    const used = () => env.DB.prepare('SELECT COALESCE(SUM(multiplications), 0) AS m FROM usage_daily WHERE credential_id = ?').bind(t.apiKeyId).first<{ m: number }>();
    const before = (await used())!.m;
    const res = await appRequest(t, 'POST', '/v1/datasets/meter-tiny/versions/1/query', encodeQuery(wide.n, makeQuery(wide, columns, 0)));
    expect(res.status).toBe(200);
    const done = Number(res.headers.get('x-nearveil-multiplications'));
    expect(done).toBe(products);
    expect((await used())!.m - before).toBe(2 * done);
    const narrow = await appRequest(t, 'POST', '/v1/datasets/meter-tiny/versions/1/query', encodeQuery(pir.n, makeQuery(pir, columns, 0)));
    expect(narrow.status).toBe(200);
    expect((await used())!.m - before).toBe(3 * done);
  });

  it('reads another month as empty, refuses a malformed month and another tenant', async () => {
    const empty = (await (await adminRequest(t, 'GET', '/v1/admin/usage?month=2001-02')).json()) as UsageBody;
    expect(empty).toMatchObject({ month: '2001-02', totals: { queries: 0, rejected: 0, bytesIn: 0, bytesOut: 0, multiplications: 0 }, days: [] });
    for (const month of ['2026-13', '26-01', 'june']) {
      const bad = await adminRequest(t, 'GET', `/v1/admin/usage?month=${month}`);
      expect(bad.status).toBe(400);
      expect(await bad.json()).toMatchObject({ error: { code: 'invalid_month', field: 'month' } });
    }
    // A misspelt dataset is refused by name, not reported as a month of zeros.
    const misspelt = await adminRequest(t, 'GET', '/v1/admin/usage?dataset=meter-tinny');
    expect(misspelt.status).toBe(404);
    expect(await misspelt.json()).toMatchObject({ error: { code: 'dataset_unknown', field: 'dataset' } });
    const other = await adminRequest(t, 'GET', '/v1/admin/usage?tenant=someone-else');
    expect(other.status).toBe(403);
    expect(await other.json()).toMatchObject({ error: { field: 'tenant' } });
  });

  it('knows the length of months and the seconds to the next one (Gregorian calendar, common practice)', () => {
    expect(monthDays('2024-02')).toEqual({ first: '2024-02-01', last: '2024-02-29' });
    expect(monthDays('2100-02').last).toBe('2100-02-28');
    expect(monthDays('2026-12').last).toBe('2026-12-31');
    expect(secondsToNextMonth(new Date('2026-12-31T23:59:30Z'))).toBe(30);
    expect(secondsToNextMonth(new Date('2026-02-01T00:00:00Z'))).toBe(28 * 86400);
    expect(secondsToNextMonth(new Date('2026-04-30T23:59:59.500Z'))).toBe(1);
  });
});
