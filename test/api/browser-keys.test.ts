import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { forgetOldClientMinutes } from '../../api/auth/browser-keys.ts';
import { database } from '../../api/db/client.ts';
import { adminRequest, BASE, createTestTenant, publishDataset, type TestTenant, worker } from './tenant-fixture.ts';
import { tinyZipCsv } from './open-data-sites.ts';

// Browser keys (api/auth/browser-keys.ts), attacked as a page of another origin and as a script
// would: the CORS preflight and the request itself are refused for unlisted origins (the CORS
// protocol as the Fetch standard defines it: a preflight without Access-Control-Allow-Origin
// stops the browser), each client address has its own per-minute rate, and refusals are reported.

const PAGE = 'https://finder.orrin-valley.example';
const OTHER = 'https://copycat.example';

interface KeyBody { id: string; kind: string; secret?: string; origins?: string[]; requestsPerMinute?: number }

const createKey = (t: TestTenant, body: object) => adminRequest(t, 'POST', '/v1/admin/keys', JSON.stringify(body), 'application/json');

function manifestAs(secret: string, headers: Record<string, string> = {}): Promise<Response> {
  return worker(`${BASE}/v1/datasets/clinics/manifest`, { headers: { authorization: `Bearer ${secret}`, ...headers } });
}

const preflight = (origin: string) =>
  worker(`${BASE}/v1/datasets/clinics/versions/1/query`, {
    method: 'OPTIONS',
    headers: { origin, 'access-control-request-method': 'POST', 'access-control-request-headers': 'authorization, content-type' },
  });

async function errorOf(res: Response): Promise<{ code: string; field?: string; message: string }> {
  return ((await res.json()) as { error: { code: string; field?: string; message: string } }).error;
}

describe('browser keys: exact origins, a per-client rate, refusals by reason', () => {
  let t: TestTenant;
  let key: KeyBody;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'clinics', tinyZipCsv(5));
    const res = await createKey(t, { label: 'Orrin finder page', kind: 'browser', origins: [PAGE], requestsPerMinute: 3, datasets: ['clinics'] });
    expect(res.status).toBe(201);
    key = (await res.json()) as KeyBody;
  });

  it('refuses malformed key requests with the field named', async () => {
    const cases: Array<[object, string]> = [
      [{ label: 'b', kind: 'browser' }, 'origins'],
      [{ label: 'b', kind: 'browser', origins: ['https://a.example/path'] }, 'origins.0'],
      [{ label: 'b', kind: 'browser', origins: ['https://a.example/'] }, 'origins.0'],
      [{ label: 'b', kind: 'browser', origins: ['ftp://a.example'] }, 'origins.0'],
      [{ label: 'b', kind: 'browser', origins: [PAGE], requestsPerMinute: 0 }, 'requestsPerMinute'],
      [{ label: 's', origins: [PAGE] }, 'origins'],
      [{ label: 's', kind: 'server', requestsPerMinute: 5 }, 'requestsPerMinute'],
      [{ label: 'b', kind: 'gadget' }, 'kind'],
    ];
    for (const [body, field] of cases) {
      const res = await createKey(t, body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      expect((await errorOf(res)).field, JSON.stringify(body)).toBe(field);
    }
  });

  it('lists the key with its kind, origins, rate and public secret', async () => {
    const { keys } = (await (await adminRequest(t, 'GET', '/v1/admin/keys')).json()) as { keys: KeyBody[] };
    const listed = keys.find((k) => k.id === key.id)!;
    expect(listed).toMatchObject({ kind: 'browser', origins: [PAGE], requestsPerMinute: 3, secret: key.secret });
    expect(keys.find((k) => k.id !== key.id)!.kind).toBe('server');
    expect(keys.find((k) => k.id !== key.id)!.secret).toBeUndefined();
  });

  it('answers the preflight of a listed origin and refuses any other', async () => {
    const ok = await preflight(PAGE);
    expect(ok.status).toBe(204);
    expect(ok.headers.get('access-control-allow-origin')).toBe(PAGE);
    expect(ok.headers.get('access-control-allow-headers')).toContain('authorization');
    const refused = await preflight(OTHER);
    expect(refused.status).toBe(403);
    expect(refused.headers.get('access-control-allow-origin')).toBeNull();
    expect((await errorOf(refused)).code).toBe('origin_not_allowed');
  });

  it('checks the origin on the request itself, whatever the preflight did', async () => {
    const ok = await manifestAs(key.secret!, { origin: PAGE, 'cf-connecting-ip': '192.0.2.10' });
    expect(ok.status).toBe(200);
    expect(ok.headers.get('access-control-allow-origin')).toBe(PAGE);
    expect(ok.headers.get('access-control-expose-headers')).toContain('Retry-After');
    const other = await manifestAs(key.secret!, { origin: OTHER, 'cf-connecting-ip': '192.0.2.10' });
    expect(other.status).toBe(403);
    expect(await errorOf(other)).toMatchObject({ code: 'origin_not_allowed', field: 'origin' });
    expect(other.headers.get('access-control-allow-origin')).toBeNull();
    const script = await manifestAs(key.secret!, { 'cf-connecting-ip': '192.0.2.10' });
    expect(script.status).toBe(403);
    expect((await errorOf(script)).code).toBe('origin_missing');
  });

  it('keeps server keys out of pages of other origins, and lets servers use them', async () => {
    const fromPage = await manifestAs(t.apiKey, { origin: OTHER });
    expect(fromPage.status).toBe(403);
    expect((await errorOf(fromPage)).code).toBe('server_key_in_page');
    expect((await manifestAs(t.apiKey)).status).toBe(200);
  });

  it('limits each client address to the key rate a minute, with Retry-After the page can read', async () => {
    const fresh = (await (await createKey(t, { label: 'rate', kind: 'browser', origins: [PAGE], requestsPerMinute: 2 })).json()) as KeyBody;
    const asClient = (ip: string) => manifestAs(fresh.secret!, { origin: PAGE, 'cf-connecting-ip': ip });
    // Two requests fit the minute; a third is refused. Should the minute turn between them, the
    // count restarts: retry once with a new minute's worth.
    let statuses: number[] = [];
    for (let attempt = 0; attempt < 2; attempt++) {
      const minute = Math.floor(Date.now() / 60_000);
      statuses = [];
      for (let i = 0; i < 3; i++) statuses.push((await asClient('198.51.100.7')).status);
      if (Math.floor(Date.now() / 60_000) === minute) break;
    }
    expect(statuses).toEqual([200, 200, 429]);
    const limited = await asClient('198.51.100.7');
    expect(limited.status).toBe(429);
    expect(limited.headers.get('access-control-allow-origin')).toBe(PAGE);
    const retry = Number(limited.headers.get('retry-after'));
    expect(retry).toBeGreaterThanOrEqual(1);
    expect(retry).toBeLessThanOrEqual(60);
    expect(await errorOf(limited)).toMatchObject({ code: 'rate_limited', field: 'requestsPerMinute' });
    // Another client of the same key has its own count.
    expect((await asClient('198.51.100.8')).status).toBe(200);
  });

  it('reports refusals by reason and key in the usage report', async () => {
    const res = await adminRequest(t, 'GET', '/v1/admin/usage');
    const { refusals } = (await res.json()) as { refusals: Array<{ reason: string; keyLabel: string; count: number }> };
    const find = (reason: string, label: string) => refusals.find((r) => r.reason === reason && r.keyLabel === label)?.count ?? 0;
    expect(find('origin_not_allowed', 'Orrin finder page')).toBe(1);
    expect(find('origin_missing', 'Orrin finder page')).toBe(1);
    expect(find('rate_limited', 'rate')).toBeGreaterThanOrEqual(2);
  });

  it('changes origins: the new one works, the old one is refused at preflight and on the request', async () => {
    const moved = 'https://orrin-valley.example';
    const patched = await adminRequest(t, 'PATCH', `/v1/admin/keys/${key.id}`, JSON.stringify({ origins: [moved] }), 'application/json');
    expect(patched.status).toBe(200);
    expect(((await patched.json()) as KeyBody).origins).toEqual([moved]);
    expect((await manifestAs(key.secret!, { origin: moved, 'cf-connecting-ip': '192.0.2.20' })).status).toBe(200);
    expect((await manifestAs(key.secret!, { origin: PAGE, 'cf-connecting-ip': '192.0.2.21' })).status).toBe(403);
    // PAGE is still listed by the 'rate' key, so its preflight passes; a revoked key's origin does not.
    await adminRequest(t, 'POST', `/v1/admin/keys/${key.id}/revoke`);
    expect((await preflight(moved)).status).toBe(403);
    const again = await adminRequest(t, 'PATCH', `/v1/admin/keys/${key.id}`, JSON.stringify({ origins: [PAGE] }), 'application/json');
    expect(again.status).toBe(409);
    expect((await errorOf(again)).code).toBe('key_revoked');
  });

  it('refuses to give a server key origins', async () => {
    const { keys } = (await (await adminRequest(t, 'GET', '/v1/admin/keys')).json()) as { keys: KeyBody[] };
    const server = keys.find((k) => k.kind === 'server')!;
    const res = await adminRequest(t, 'PATCH', `/v1/admin/keys/${server.id}`, JSON.stringify({ origins: [PAGE] }), 'application/json');
    expect(res.status).toBe(409);
    expect((await errorOf(res)).code).toBe('key_not_browser');
    const empty = await adminRequest(t, 'PATCH', `/v1/admin/keys/${server.id}`, JSON.stringify({}), 'application/json');
    expect(empty.status).toBe(400);
  });

  it('forgets rate counts older than ten minutes, and keeps recent ones', async () => {
    const count = async () => (await env.DB.prepare('SELECT count(*) AS n FROM client_minutes').first<{ n: number }>())!.n;
    expect(await count()).toBeGreaterThan(0);
    await forgetOldClientMinutes(database(env), Date.now());
    expect(await count()).toBeGreaterThan(0);
    await forgetOldClientMinutes(database(env), Date.now() + 11 * 60_000);
    expect(await count()).toBe(0);
  });
});
