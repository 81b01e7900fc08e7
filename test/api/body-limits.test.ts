import { beforeAll, describe, expect, it } from 'vitest';
import { BASE, createTestTenant, publishDataset, storedState, worker, type TestTenant } from './tenant-fixture.ts';
import { tinyZipCsv } from './open-data-sites.ts';

/** A body of `total` bytes streamed in 64 KiB chunks with no Content-Length; counts what was pulled. */
function endlessBody(total: number) {
  const chunk = new Uint8Array(64 * 1024).fill(7);
  const counter = { pulled: 0 };
  const stream = new ReadableStream<Uint8Array>({
    pull(controller) {
      if (counter.pulled >= total) return controller.close();
      counter.pulled += chunk.length;
      controller.enqueue(chunk);
    },
  });
  return { stream, counter };
}

describe('request bodies over the limits are refused before they are read whole', () => {
  let t: TestTenant;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'limits-tiny', tinyZipCsv(6));
  });

  it('refuses a streamed query body without Content-Length after reading little more than the limit', async () => {
    const manifest = (await (await worker(`${BASE}/v1/datasets/limits-tiny/manifest`, { headers: { authorization: `Bearer ${t.apiKey}` } })).json()) as {
      matrix: { columns: number };
    };
    // The largest query this version accepts: header, modulus and one value per column at 3072 bits (core/pir/WIRE.md).
    const largest = 10 + 384 * (manifest.matrix.columns + 1);
    const { stream, counter } = endlessBody(64 * 1024 * 1024);
    const before = await storedState();
    const request = new Request(`${BASE}/v1/datasets/limits-tiny/versions/1/query`, {
      method: 'POST',
      headers: { authorization: `Bearer ${t.apiKey}`, 'content-type': 'application/octet-stream' },
      body: stream,
    });
    expect(request.headers.get('content-length')).toBeNull();
    const res = await worker(request);
    expect(res.status).toBe(413);
    expect(await res.json()).toMatchObject({ error: { code: 'body_too_large', field: 'body' } });
    // Refused bodies are drained up to the limit once more (api/http/body-limit.ts), then cut.
    expect(counter.pulled).toBeLessThan(2 * largest + 4 * 64 * 1024);
    // The refusal is counted as a rejected query, nothing else changes.
    const after = JSON.parse(await storedState()) as { rows: unknown[][] };
    const beforeRows = JSON.parse(before) as { rows: unknown[][] };
    expect(after.rows.slice(0, 4)).toEqual(beforeRows.rows.slice(0, 4));
  });

  it('refuses a declared Content-Length over the limit without reading the body', async () => {
    const { stream, counter } = endlessBody(1024 * 1024);
    const res = await worker(`${BASE}/v1/datasets/limits-tiny/versions/1/query`, {
      method: 'POST',
      headers: { authorization: `Bearer ${t.apiKey}`, 'content-type': 'application/octet-stream', 'content-length': String(1024 * 1024) },
      body: stream,
    });
    expect(res.status).toBe(413);
    expect(counter.pulled).toBeLessThanOrEqual(4 * 64 * 1024);
  });

  it('refuses a streamed site table over 32 MiB with a complete JSON error, reading no more than twice the limit, and stores nothing', async () => {
    const { stream, counter } = endlessBody(40 * 1024 * 1024);
    const before = await storedState();
    const res = await worker(`${BASE}/v1/admin/datasets/limits-tiny/versions`, {
      method: 'POST',
      headers: { authorization: `Bearer ${t.adminToken}`, 'content-type': 'text/csv' },
      body: stream,
    });
    expect(res.status).toBe(413);
    expect(await res.json()).toMatchObject({ error: { code: 'body_too_large', field: 'body' } });
    // 40 MiB is under twice the limit: read to its end, so a proxy in front delivers the 413.
    expect(counter.pulled).toBe(40 * 1024 * 1024);
    expect(await storedState()).toEqual(before);
    // The isolate is still there and answers the next request.
    expect((await worker(`${BASE}/healthz`)).status).toBe(200);
  });

  it('refuses a streamed admin JSON body over its 16 KiB limit', async () => {
    const { stream, counter } = endlessBody(32 * 1024 * 1024);
    const res = await worker(`${BASE}/v1/admin/keys`, {
      method: 'POST',
      headers: { authorization: `Bearer ${t.adminToken}`, 'content-type': 'application/json' },
      body: stream,
    });
    expect(res.status).toBe(413);
    expect(await res.json()).toMatchObject({ error: { code: 'body_too_large' } });
    expect(counter.pulled).toBeLessThan(16 * 1024 + 4 * 64 * 1024); // hono's bodyLimit: small routes are cut at once
  });
});
