import { describe, expect, it } from 'vitest';
import { readCsv } from '../../core/geo/csv.ts';
import type { Statement } from '../../api/billing/statement.ts';
import { statementCsv } from '../../api/billing/statement-csv.ts';
import { adminRequest, createTestTenant, storedState, type TestTenant } from './tenant-fixture.ts';

// Invented kiosks of the invented Fenwick Isles.
type ErrorBody = { error: { code: string; message: string; field?: string; details?: Array<{ row?: number; column?: string; message: string }> } };

const upload = (t: TestTenant, body: BodyInit) => adminRequest(t, 'POST', '/v1/admin/datasets/fenwick/versions', body, 'text/csv');

/** Uploads, expects a 400 JSON error naming `file`, and checks that nothing stored changed. */
async function refusedUpload(t: TestTenant, body: BodyInit, code: string): Promise<ErrorBody['error']> {
  const before = await storedState();
  const res = await upload(t, body);
  const { error } = (await res.json()) as ErrorBody;
  expect({ status: res.status, code: error.code, field: error.field }).toEqual({ status: 400, code, field: 'file' });
  expect(await storedState()).toBe(before);
  return error;
}

async function tenantWithDataset(): Promise<TestTenant> {
  const t = await createTestTenant();
  const made = await adminRequest(t, 'POST', '/v1/admin/datasets', JSON.stringify({ slug: 'fenwick' }), 'application/json');
  expect(made.status).toBe(201);
  return t;
}

const ascii = (s: string) => [...s].map((c) => c.charCodeAt(0));

describe('POST .../versions refuses hostile site tables with a 4xx naming row and column', () => {
  it('refuses a Latin-1 file naming the line and byte offset, and says how to re-save it (RFC 3629)', async () => {
    const t = await tenantWithDataset();
    // "Brèn" in ISO 8859-1: è is the single byte 0xE8, never valid on its own in UTF-8. It follows 16 + 5 bytes: offset 21.
    const latin1 = new Uint8Array([...ascii('id,name,lat,lon\nk1,Br'), 0xe8, ...ascii('n,57.1,-6.2\n')]);
    const error = await refusedUpload(t, latin1, 'encoding');
    expect(error.message).toContain('line 2');
    expect(error.message).toContain('byte offset 21');
    expect(error.message).toMatch(/re-save the file with the UTF-8 encoding/);
  });

  it('refuses a NUL in an id and a right-to-left override in a detail cell (Unicode UAX #9, from memory)', async () => {
    const t = await tenantWithDataset();
    const error = await refusedUpload(t, 'id,name,lat,lon,hours\nk\u00001,Skerry Pier,57.1,-6.2,9-17\nk2,Tarn Slip,57.2,-6.3,9\u202e71\n', 'site_table');
    expect(error.details).toEqual([
      { row: 2, column: 'id', message: expect.stringContaining('U+0000') },
      { row: 3, column: 'hours', message: expect.stringContaining('U+202E') },
    ]);
  });

  it('refuses a 4,000-character id and 3,000 detail columns', async () => {
    const t = await tenantWithDataset();
    const longId = await refusedUpload(t, `id,lat,lon\n${'k'.repeat(4000)},57.1,-6.2\n`, 'site_table');
    expect(longId.details).toEqual([{ row: 2, column: 'id', message: 'id is 4000 characters long; at most 64 are allowed' }]);
    const names = Array.from({ length: 3000 }, (_, i) => `d${i}`);
    const wide = await refusedUpload(t, `id,lat,lon,${names.join(',')}\nk1,57.1,-6.2,${names.map(() => 'x').join(',')}\n`, 'site_table');
    expect(wide.details).toEqual([{ row: 1, message: 'expected at most 64 columns, got 3003' }]);
  });

  it('stores formula-like cells exactly and serves them back unchanged: neutralising is for exports people open', async () => {
    const t = await tenantWithDataset();
    const csv = 'id,name,lat,lon,hours\nk1,@Skerry Pier,57.1,-111.2,"=HYPERLINK(""http://attacker.invalid"",""open"")"\n';
    const res = await upload(t, csv);
    expect(res.status).toBe(201);
    const { version } = (await res.json()) as { version: number };
    const table = await adminRequest(t, 'GET', `/v1/admin/datasets/fenwick/versions/${version}/table`);
    expect(await table.text()).toBe(csv);
  });
});

describe('statementCsv neutralises formula text (OWASP "CSV Injection", from memory)', () => {
  it('prefixes text cells starting with = or @ and leaves numbers, negative ones included', () => {
    const statement = {
      tenant: '=HYPERLINK("http://attacker.invalid")',
      month: '2026-11',
      currency: '@EUR',
      lines: [{ item: 'queries', quantity: 3, unit: 'query', unitPriceMicros: 100, pricedPer: 1, amountMicros: 300, amount: '0.00' }],
      totalMicros: -300,
      amountDue: '-0.01',
      days: [],
    } as unknown as Statement;
    // RFC 4180: read back by the project's RFC 4180 reader, cell by cell.
    const records = readCsv(statementCsv(statement)).records;
    expect(records[1]).toEqual([`'=HYPERLINK("http://attacker.invalid")`, '2026-11', "'@EUR", 'queries', '3', 'query', '0.0001', '1', '0.00', '300']);
    expect(records[2]!.slice(8)).toEqual(['-0.01', '-300']);
  });
});
