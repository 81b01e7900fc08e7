import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { formatMicros, lineAmount } from '../../api/billing/money.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { adminRequest, appRequest, createTestTenant, publishDataset, type TestTenant, registeredKey } from './tenant-fixture.ts';
import { tinyZipCsv } from './open-data-sites.ts';
import { createTestUser, jsonRequest, sessionRequest, signIn } from './user-fixture.ts';

interface StatementBody {
  tenant: string;
  month: string;
  currency: string;
  tariff: { fromMonth: string };
  usage: { queries: number; rejected: number; bytesIn: number; bytesOut: number; multiplications: number };
  lines: Array<{ item: string; quantity: number; unitPriceMicros: number; pricedPer: number; amountMicros: number; amount: string }>;
  totalMicros: number;
  total: string;
  amountDue: string;
  days: Array<{ day: string; queries: number }>;
}

async function insertTariff(tenantId: string, fromMonth: string, prices: [number, number, number, number]) {
  await env.DB.prepare(
    'INSERT INTO tariffs (tenant_id, from_month, query_micros, gb_micros, million_multiplications_micros, monthly_base_micros, set_by) VALUES (?, ?, ?, ?, ?, ?, ?)',
  ).bind(tenantId, fromMonth, ...prices, 'test').run();
}

/** Half-up rounding of a / b for whole a, b (b > 0), done in BigInt: the test's own arithmetic. */
const roundHalfUp = (a: bigint, b: bigint) => Number((2n * a + b) / (2n * b));

describe('monthly statements: tariffs applied to the daily counts', () => {
  let t: TestTenant;
  const month = new Date().toISOString().slice(0, 7);

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'billed', tinyZipCsv(6));
    const key = await registeredKey(t);
    const manifest = (await (await appRequest(t, 'GET', '/v1/datasets/billed/manifest')).json()) as { matrix: { columns: number } };
    for (let i = 0; i < 13; i++) {
      const res = await appRequest(t, 'POST', '/v1/datasets/billed/versions/1/query', encodeQuery(key.n, makeQuery(key, manifest.matrix.columns, 0)));
      expect(res.status).toBe(200);
    }
    expect((await appRequest(t, 'POST', '/v1/datasets/billed/versions/7/query', new Uint8Array(8))).status).toBe(404);
  });

  it('refuses a statement while the tenant has no tariff, and malformed months and formats', async () => {
    const none = await adminRequest(t, 'GET', `/v1/admin/statements/${month}`);
    expect(none.status).toBe(409);
    expect(await none.json()).toMatchObject({ error: { code: 'tariff_missing' } });
    for (const [path, code] of [['/v1/admin/statements/2026-1', 'invalid_month'], ['/v1/admin/statements/2999-01', 'invalid_month'], [`/v1/admin/statements/${month}?format=pdf`, 'invalid_format']] as const) {
      const res = await adminRequest(t, 'GET', path);
      expect(res.status).toBe(400);
      expect(await res.json()).toMatchObject({ error: { code } });
    }
  });

  it('prices the month so its totals are recomputed exactly from the stored usage rows', async () => {
    // 0.0015 per query, 0.09 per GB moved, 0.0025 per million multiplications, 49.99 a month.
    const prices = [1_500, 90_000, 2_500, 49_990_000] as [number, number, number, number];
    await insertTariff(t.tenantId, '2000-01', prices);
    const res = await adminRequest(t, 'GET', `/v1/admin/statements/${month}`);
    expect(res.status).toBe(200);
    const s = (await res.json()) as StatementBody;
    const rows = await env.DB.prepare(
      `SELECT u.day, u.queries, u.bytes_in + u.bytes_out AS moved, u.multiplications AS m FROM usage_daily u JOIN datasets d ON d.id = u.dataset_id
       WHERE d.tenant_id = ? AND u.day LIKE ? || '-%'`,
    ).bind(t.tenantId, month).all<{ day: string; queries: number; moved: number; m: number }>();
    const queries = rows.results.reduce((a, r) => a + r.queries, 0);
    const moved = rows.results.reduce((a, r) => a + BigInt(r.moved), 0n);
    const mults = rows.results.reduce((a, r) => a + BigInt(r.m), 0n);
    expect(queries).toBe(13);
    const expected = [
      prices[3],
      queries * prices[0],
      roundHalfUp(moved * BigInt(prices[1]), 1_000_000_000n),
      roundHalfUp(mults * BigInt(prices[2]), 1_000_000n),
    ];
    expect(s.lines.map((l) => l.amountMicros)).toEqual(expected);
    expect(s.totalMicros).toBe(expected.reduce((a, b) => a + b, 0));
    expect(s).toMatchObject({ currency: 'EUR', month, usage: { queries: 13, rejected: 1 } });
    expect(s.total).toBe(`${formatMicros(s.totalMicros)} EUR`);
    expect(s.days.reduce((a, d) => a + d.queries, 0)).toBe(13);
  });

  it('gives the same statement as CSV (RFC 4180), whose lines sum to its total', async () => {
    const res = await adminRequest(t, 'GET', `/v1/admin/statements/${month}?format=csv`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^text\/csv/);
    const text = await res.text();
    expect(text.endsWith('\r\n')).toBe(true);
    const [header, ...rest] = text.split('\r\n');
    expect(header).toBe('tenant,month,currency,item,quantity,unit,unit_price,priced_per,amount,amount_micros');
    // One table: the lines and the total row, nothing after them (the daily counts are their own file).
    expect(rest).toHaveLength(6);
    expect(rest[5]).toBe('');
    const lines = rest.slice(0, 4).map((l) => l.split(','));
    const total = rest[4]!.split(',');
    expect(lines.map((l) => l[3])).toEqual(['monthly_base', 'queries', 'transfer', 'multiplications']);
    expect(total[3]).toBe('total');
    expect(lines.reduce((a, l) => a + Number(l[9]), 0)).toBe(Number(total[9]));
    // EUR has 2 decimals (ISO 4217): amounts in cents, and the cents add up to the total's.
    for (const l of [...lines, total]) expect(l[8]).toMatch(/^\d+\.\d\d$/);
    expect(lines.reduce((a, l) => a + Math.round(Number(l[8]) * 100), 0)).toBe(Math.round(Number(total[8]) * 100));
    const json = (await (await adminRequest(t, 'GET', `/v1/admin/statements/${month}`)).json()) as StatementBody;
    expect(Number(total[9])).toBe(json.totalMicros);
    const days = await adminRequest(t, 'GET', `/v1/admin/statements/${month}?format=csv&table=days`);
    expect(days.headers.get('content-disposition')).toMatch(/-days\.csv"$/);
    const dayRows = (await days.text()).split('\r\n');
    expect(dayRows[0]).toBe('tenant,month,day,queries,rejected,bytes_in,bytes_out,multiplications');
    expect(dayRows.slice(1, -1).reduce((a, l) => a + Number(l.split(',')[3]), 0)).toBe(json.usage.queries);
    const wrong = await adminRequest(t, 'GET', `/v1/admin/statements/${month}?format=csv&table=both`);
    expect(wrong.status).toBe(400);
    expect(((await wrong.json()) as { error: { field: string } }).error.field).toBe('table');
  });

  it('prices a past month with the tariff in force then, from its daily rows', async () => {
    const other = await createTestTenant();
    await publishDataset(other, 'history', tinyZipCsv(4));
    const ids = await env.DB.prepare("SELECT d.id AS dataset, c.id AS credential FROM datasets d JOIN credentials c ON c.tenant_id = d.tenant_id AND c.kind = 'query' WHERE d.tenant_id = ?")
      .bind(other.tenantId).first<{ dataset: string; credential: string }>();
    const insert = (day: string, q: number, i: number, o: number, m: number) =>
      env.DB.prepare('INSERT INTO usage_daily (credential_id, dataset_id, version, day, queries, bytes_in, bytes_out, multiplications) VALUES (?, ?, 1, ?, ?, ?, ?, ?)')
        .bind(ids!.credential, ids!.dataset, day, q, i, o, m).run();
    await insert('2025-10-01', 1000, 266_000_000, 522_000_000, 9_000_000);
    await insert('2025-10-31', 2500, 700_000_000, 1_300_000_001, 21_500_000);
    await insert('2025-11-01', 7, 1, 1, 1);
    await insertTariff(other.tenantId, '2025-09', [2_000, 150_000, 10_000, 0]);
    await insertTariff(other.tenantId, '2025-11', [9_999, 9_999, 9_999, 9_999]);
    const s = (await (await adminRequest(other, 'GET', '/v1/admin/statements/2025-10')).json()) as StatementBody;
    expect(s.tariff.fromMonth).toBe('2025-09');
    // Worked by hand: 3,500 queries x 2,000 = 7,000,000; 2,788,000,001 bytes x 150,000 / 10^9 = 418,200.00015
    // -> 418,200; 30,500,000 products x 10,000 / 10^6 = 305,000. Total 7,723,200 micro-units = 7.723200 EUR.
    expect(s.lines.map((l) => l.amountMicros)).toEqual([0, 7_000_000, 418_200, 305_000]);
    expect(s.totalMicros).toBe(7_723_200);
    expect(s.total).toBe('7.723200 EUR');
    // In cents (EUR: 2 decimals, ISO 4217), each line half up: 0.4182 -> 0.42, 0.305 -> 0.31; due is their sum.
    expect(s.lines.map((l) => l.amount)).toEqual(['0.00', '7.00', '0.42', '0.31']);
    expect(s.amountDue).toBe('7.73');
    expect(s.days.map((d) => d.day)).toEqual(['2025-10-01', '2025-10-31']);
  });

  it('only the operator sets tariffs; they start this month or later and price statements from then on', async () => {
    const tenant = await createTestTenant();
    const slug = (await env.DB.prepare('SELECT slug FROM tenants WHERE id = ?').bind(tenant.tenantId).first<{ slug: string }>())!.slug;
    const path = `/v1/operator/tenants/${slug}/tariff`;
    const prices = { queryMicros: 1_000, gbMicros: 50_000, millionMultiplicationsMicros: 3_000, monthlyBaseMicros: 10_000_000 };
    const byAdmin = await adminRequest(tenant, 'PUT', path, JSON.stringify(prices), 'application/json');
    expect(byAdmin.status).toBe(403);
    const operator = await signIn(await createTestUser(null, 'operator'));
    const set = await jsonRequest(operator, 'PUT', path, prices);
    expect(set.status).toBe(200);
    expect(await set.json()).toMatchObject({ tenant: slug, currency: 'EUR', tariff: { ...prices, fromMonth: month } });
    for (const [body, field] of [[{ ...prices, fromMonth: '2001-01' }, 'fromMonth'], [{ ...prices, queryMicros: 1.5 }, 'queryMicros'], [{ ...prices, gbMicros: -1 }, 'gbMicros'], [{ queryMicros: 1 }, 'gbMicros']] as const) {
      const bad = await jsonRequest(operator, 'PUT', path, body);
      expect(bad.status).toBe(400);
      expect(await bad.json()).toMatchObject({ error: { field } });
    }
    expect((await jsonRequest(operator, 'PUT', '/v1/operator/tenants/no-such-tenant/tariff', prices)).status).toBe(404);
    const history = (await (await sessionRequest(operator, 'GET', path)).json()) as { tariffs: Array<{ fromMonth: string }> };
    expect(history.tariffs.map((x) => x.fromMonth)).toEqual([month]);
    const statement = await adminRequest(tenant, 'GET', `/v1/admin/statements/${month}`);
    expect(statement.status).toBe(200);
    expect(((await statement.json()) as StatementBody).totalMicros).toBe(10_000_000);
    const asOperator = await sessionRequest(operator, 'GET', `/v1/admin/statements/${month}?tenant=${slug}`);
    expect(((await asOperator.json()) as StatementBody).tenant).toBe(slug);
    // The tenant's admins read who set their tariff; refused attempts leave no line.
    const audit = (await (await adminRequest(tenant, 'GET', '/v1/admin/audit')).json()) as { events: Array<{ action: string; target: string; actor: { label: string } }> };
    const tariffLines = audit.events.filter((e) => e.action === 'tariff.set');
    expect(tariffLines.map((e) => e.target)).toEqual([`tenant ${slug} from ${month}`]);
  });

  it('rounds each line half up once, in exact integer arithmetic', () => {
    expect(lineAmount(1, 1, 2)).toBe(1);
    expect(lineAmount(1, 1, 3)).toBe(0);
    expect(lineAmount(3, 1, 2)).toBe(2);
    expect(lineAmount(2 ** 40, 1_000_000, 1_000_000_000)).toBe(1_099_511_628);
    expect(() => lineAmount(-1, 5)).toThrow(RangeError);
    expect(() => lineAmount(2 ** 52, 2 ** 20)).toThrow(/past exact arithmetic/);
    expect(formatMicros(49_990_000)).toBe('49.990000');
    expect(formatMicros(5)).toBe('0.000005');
  });
});
