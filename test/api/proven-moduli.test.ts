import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { forgetExpiredModuli } from '../../api/moduli/proven-moduli.ts';
import { modulusFingerprint } from '../../core/modulus-proof/fingerprint.ts';
import { proveModulus } from '../../core/modulus-proof/prove-modulus.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { encodeModulusProof, encodeQuery } from '../../core/pir/wire.ts';
import { memoryKeyStore } from '../../sdk/client-key.ts';
import { connect } from '../../sdk/client.ts';
import { bestMultiPrimeProof, multiPrimeQuery, productOf, seededPrimes } from '../attack/multi-prime-client.ts';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { appRequest, BASE, createTestTenant, publishDataset, worker, type TestTenant } from './tenant-fixture.ts';

/** Answered queries and quota slots of a key, and its refusals by reason: what a refusal must not move. */
async function meterOf(credentialId: string) {
  const answered = await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q FROM usage_daily WHERE credential_id = ?').bind(credentialId).first<{ q: number }>();
  const slots = await env.DB.prepare('SELECT COALESCE(SUM(queries), 0) AS q FROM key_months WHERE credential_id = ?').bind(credentialId).first<{ q: number }>();
  const refused = await env.DB.prepare('SELECT reason, SUM(queries) AS q FROM rejections_daily WHERE credential_id = ? GROUP BY reason ORDER BY reason').bind(credentialId).all<{ reason: string; q: number }>();
  return { answered: answered!.q, slots: slots!.q, refused: Object.fromEntries(refused.results.map((r) => [r.reason, r.q])) };
}

const register = (t: TestTenant, body: Uint8Array) => appRequest(t, 'POST', '/v1/moduli', body as Uint8Array<ArrayBuffer>);
const isRegistered = async (n: bigint) => (await env.DB.prepare('SELECT 1 FROM proven_moduli WHERE modulus_sha256 = ?').bind(modulusFingerprint(n)).first()) !== null;

describe('queries are answered only for proven moduli', () => {
  const { csv } = rhodeIslandZipCsv();
  let t: TestTenant;
  let key: PirKeyPair;
  let columns: { cells: number; partition: number; details: number };

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-proof', csv, 'veiled');
    const manifest = (await (await appRequest(t, 'GET', '/v1/datasets/ri-proof/manifest')).json()) as {
      matrix: { columns: number };
      partition: { columns: number };
      details: { matrix: { columns: number } };
    };
    columns = { cells: manifest.matrix.columns, partition: manifest.partition.columns, details: manifest.details.matrix.columns };
    key = await generateKeyPair({ modulusBits: 2048 });
  });

  it('refuses every round of an unregistered modulus with 403 modulus_unproven, before any work: no answer, no quota slot, no usage', async () => {
    const before = await meterOf(t.apiKeyId);
    const rounds = [
      ['/v1/datasets/ri-proof/versions/1/query', columns.cells],
      ['/v1/datasets/ri-proof/versions/1/query?matrix=partition', columns.partition],
      ['/v1/datasets/ri-proof/versions/1/details/query', columns.details],
    ] as const;
    for (const [path, count] of rounds) {
      const res = await appRequest(t, 'POST', path, encodeQuery(key.n, makeQuery(key, count, 0)));
      expect(res.status, path).toBe(403);
      const body = (await res.json()) as { error: { code: string; field: string; message: string } };
      expect(body.error).toMatchObject({ code: 'modulus_unproven', field: 'modulus' });
      expect(body.error.message).toContain('POST /v1/moduli');
    }
    const after = await meterOf(t.apiKeyId);
    expect([after.answered, after.slots]).toEqual([before.answered, before.slots]);
    expect(after.refused.modulus_unproven).toBe((before.refused.modulus_unproven ?? 0) + 3);
  });

  it('registers a modulus with its proof (201), acknowledges it again without a check (200), then answers all three rounds', async () => {
    const proof = encodeModulusProof(proveModulus(key));
    const first = await register(t, proof);
    expect(first.status).toBe(201);
    expect(first.headers.get('server-timing')).toMatch(/^proof;dur=[0-9.]+/);
    const { modulus } = (await first.json()) as { modulus: { sha256: string; bits: number; registeredAt: string; expiresAt: string } };
    expect(modulus.sha256).toBe(modulusFingerprint(key.n));
    expect(modulus.bits).toBe(2048);
    // MODULUS_LIFETIME_DAYS defaults to 30.
    expect(Date.parse(modulus.expiresAt) - Date.parse(modulus.registeredAt)).toBe(30 * 86_400_000);
    const checked = () => env.DB.prepare('SELECT COALESCE(SUM(checked), 0) AS n FROM modulus_registrations WHERE credential_id = ?').bind(t.apiKeyId).first<{ n: number }>();
    const checkedOnce = (await checked())!.n;
    const again = await register(t, proof);
    expect(again.status).toBe(200);
    expect((await checked())!.n).toBe(checkedOnce);
    // Only the fingerprint is kept: no key, no tenant.
    const row = await env.DB.prepare('SELECT * FROM proven_moduli WHERE modulus_sha256 = ?').bind(modulus.sha256).first<Record<string, unknown>>();
    expect(Object.keys(row!).sort()).toEqual(['expires_at', 'modulus_bits', 'modulus_sha256', 'registered_at']);
    for (const [path, count] of [
      ['/v1/datasets/ri-proof/versions/1/query', columns.cells],
      ['/v1/datasets/ri-proof/versions/1/query?matrix=partition', columns.partition],
      ['/v1/datasets/ri-proof/versions/1/details/query', columns.details],
    ] as const) {
      expect((await appRequest(t, 'POST', path, encodeQuery(key.n, makeQuery(key, count, 0)))).status, path).toBe(200);
    }
  });

  it('refuses a bad proof with 422 modulus_proof naming the failing part, and keeps nothing', async () => {
    const other = await generateKeyPair({ modulusBits: 2048 });
    const proof = proveModulus(other);
    const roots = [...proof.roots];
    roots[17] = (roots[17]! * 5n) % other.n;
    for (const [bad, field] of [
      [{ ...proof, roots }, 'roots[17]'],
      [{ ...proof, roots: proof.roots.slice(0, 100) }, 'roots'],
      [{ ...proof, c: proof.d }, 'c'],
    ] as const) {
      const res = await register(t, encodeModulusProof(bad));
      expect(res.status).toBe(422);
      expect(await res.json()).toMatchObject({ error: { code: 'modulus_proof', field } });
    }
    expect(await isRegistered(other.n)).toBe(false);
    const garbage = await register(t, new Uint8Array([1, 2, 3]));
    expect(garbage.status).toBe(400);
    expect(await garbage.json()).toMatchObject({ error: { code: 'wire_format', field: 'body' } });
    const refused = await meterOf(t.apiKeyId);
    expect(refused.refused.modulus_proof).toBeGreaterThanOrEqual(3);
  });

  it('forgets a registration when it expires: its queries are refused again, and the cron removes the row', async () => {
    const late = await generateKeyPair({ modulusBits: 2048 });
    const fingerprint = modulusFingerprint(late.n);
    await env.DB.prepare('INSERT INTO proven_moduli (modulus_sha256, modulus_bits, registered_at, expires_at) VALUES (?, 2048, ?, ?)')
      .bind(fingerprint, Date.now() - 31 * 86_400_000, Date.now() - 86_400_000)
      .run();
    const res = await appRequest(t, 'POST', '/v1/datasets/ri-proof/versions/1/query', encodeQuery(late.n, makeQuery(late, columns.cells, 0)));
    expect(res.status).toBe(403);
    await forgetExpiredModuli(env);
    expect(await isRegistered(late.n)).toBe(false);
    expect(await isRegistered(key.n)).toBe(true);
  });
});

describe('the multi-prime client of the attack gets nothing through the real routes', () => {
  let t: TestTenant;
  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-attack', rhodeIslandZipCsv().csv);
  });

  it('an 8-prime modulus: its query is refused before any work, its best proof is refused, the meter and quota do not move', async () => {
    const primes = seededPrimes(8, 256, 12);
    const n = productOf(primes, 2048);
    const manifest = (await (await appRequest(t, 'GET', '/v1/datasets/ri-attack/manifest')).json()) as { matrix: { columns: number } };
    const before = await meterOf(t.apiKeyId);
    const query = encodeQuery(n, multiPrimeQuery(primes, manifest.matrix.columns, [0, 1, 2, 3, 4, 5, 6], 3));
    const asked = await appRequest(t, 'POST', '/v1/datasets/ri-attack/versions/1/query', query);
    expect(asked.status).toBe(403);
    expect(await asked.json()).toMatchObject({ error: { code: 'modulus_unproven' } });
    const proved = await register(t, encodeModulusProof(bestMultiPrimeProof(primes).proof));
    expect(proved.status).toBe(422);
    expect(await proved.json()).toMatchObject({ error: { code: 'modulus_proof', field: 'roots[0]' } });
    expect(await isRegistered(n)).toBe(false);
    const again = await appRequest(t, 'POST', '/v1/datasets/ri-attack/versions/1/query', query);
    expect(again.status).toBe(403);
    const after = await meterOf(t.apiKeyId);
    expect([after.answered, after.slots]).toEqual([before.answered, before.slots]);
  });

  it('limits refused proofs per key and hour (429 registration_throttled with Retry-After); other keys go on', async () => {
    const other = await createTestTenant();
    const bad = encodeModulusProof(bestMultiPrimeProof(seededPrimes(4, 512, 204)).proof);
    const statuses: number[] = [];
    for (let i = 0; i < 22; i++) statuses.push((await register(other, bad)).status);
    // MODULUS_REFUSED_PROOFS_PER_HOUR defaults to 20.
    expect(statuses).toEqual([...Array(20).fill(422), 429, 429]);
    const throttled = await register(other, bad);
    expect(throttled.headers.get('retry-after')).toMatch(/^\d+$/);
    expect(Number(throttled.headers.get('retry-after'))).toBeLessThanOrEqual(3600);
    expect(await throttled.json()).toMatchObject({ error: { code: 'registration_throttled', field: 'authorization' } });
    // Even a good proof waits for the next hour on that key; another key is not held up.
    const good = encodeModulusProof(proveModulus(await generateKeyPair({ modulusBits: 2048 })));
    expect((await register(other, good)).status).toBe(429);
    expect((await register(t, good)).status).toBe(201);
  });
});

describe('the SDK proves, registers and rotates its key by itself', () => {
  let t: TestTenant;
  const registrations: string[] = [];
  // Counts the registrations the SDK sends; passes everything to the Worker.
  const counting = (r: Request) => {
    if (new URL(r.url).pathname === '/v1/moduli') registrations.push(r.method);
    return worker(r);
  };
  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'ri-sdk', rhodeIslandZipCsv().csv, 'veiled');
  });

  it('registers once, then asks the veiled rounds and the details round with the same proof', async () => {
    registrations.length = 0;
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, fetch: counting });
    const first = await client.nearest('ri-sdk', { lat: 41.8, lon: -71.4 }, { details: true });
    expect(first.cost.keySetup).toMatchObject({ proofBytes: 29_450 });
    expect(first.cost.keySetup!.registerMs).toBeGreaterThan(0);
    const second = await client.nearest('ri-sdk', { lat: 41.5, lon: -71.3 }, { details: true });
    expect(second.cost.keySetup).toBeUndefined();
    expect(registrations).toEqual(['POST']);
    expect(await isRegistered((await client.keyPair()).n)).toBe(true);
  });

  it('replaces its key after its lifetime: a new modulus, proven and registered', async () => {
    registrations.length = 0;
    const store = memoryKeyStore();
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, fetch: counting, keyStore: store, keyLifetime: { queries: 2 } });
    const moduli: bigint[] = [];
    for (let i = 0; i < 3; i++) {
      await client.nearest('ri-sdk', { lat: 41.8, lon: -71.4 });
      moduli.push((await store.load(2048))!.key.n);
    }
    // A veiled lookup is two queries: each lookup uses up a two-query key.
    expect(new Set(moduli).size).toBe(3);
    expect(registrations).toHaveLength(3);
  });

  it('registers again when the server does not know a key it thinks registered', async () => {
    registrations.length = 0;
    const store = memoryKeyStore();
    const key = await generateKeyPair({ modulusBits: 2048 });
    await store.save({ key, createdAt: Date.now(), queries: 0, proof: encodeModulusProof(proveModulus(key)), registrations: { [new URL(BASE).href]: Date.now() + 86_400_000 } });
    const client = connect({ endpoint: BASE, apiKey: t.apiKey, fetch: counting, keyStore: store });
    const found = await client.nearest('ri-sdk', { lat: 41.8, lon: -71.4 });
    expect(found.results).toHaveLength(1);
    expect(registrations).toEqual(['POST']);
    expect(await isRegistered(key.n)).toBe(true);
  });
});
