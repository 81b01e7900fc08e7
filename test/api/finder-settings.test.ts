import { beforeAll, describe, expect, it } from 'vitest';
import { adminRequest, BASE, createTestTenant, publishDataset, type TestTenant, worker } from './tenant-fixture.ts';
import { tinyZipCsv } from './open-data-sites.ts';

// The finder page's switch (api/finder/finder-routes.ts): on makes a browser key for one dataset
// usable only by pages of this server; the page is served with a Content-Security-Policy
// (W3C CSP Level 3: frame-ancestors decides who may frame it) and carries only public config.

interface FinderBody { enabled: boolean; url: string; frameOrigins: string[]; k: number; keyId: string | null; requestsPerMinute: number | null; embed: string }

const EMBEDDER = 'https://orrin-health.example';
const put = (t: TestTenant, dataset: string, body: object) => adminRequest(t, 'PUT', `/v1/admin/datasets/${dataset}/finder`, JSON.stringify(body), 'application/json');
const page = (tenant: string, dataset: string) => worker(`${BASE}/find/${tenant}/${dataset}`);

/** The config block the page's script reads. */
function pageConfig(html: string): { dataset: string; apiKey: string; k: number; title: string } {
  const match = /<script type="application\/json" id="finder-config">([^<]*)<\/script>/.exec(html);
  if (!match) throw new Error('no finder-config block in the page');
  return JSON.parse(match[1]!) as { dataset: string; apiKey: string; k: number; title: string };
}

const manifestWith = (key: string, headers: Record<string, string>, dataset = 'shelters') =>
  worker(`${BASE}/v1/datasets/${dataset}/manifest`, { headers: { authorization: `Bearer ${key}`, 'cf-connecting-ip': '203.0.113.5', ...headers } });

describe('the finder page switch', () => {
  let t: TestTenant;

  beforeAll(async () => {
    t = await createTestTenant();
    await publishDataset(t, 'shelters', tinyZipCsv(6), undefined, 2);
    await publishDataset(t, 'pharmacies', tinyZipCsv(4));
  });

  it('is off at first: the page is a plain 404', async () => {
    const view = (await (await adminRequest(t, 'GET', '/v1/admin/datasets/shelters/finder')).json()) as FinderBody;
    expect(view).toMatchObject({ enabled: false, keyId: null, url: `${BASE}/find/${t.slug}/shelters` });
    const res = await page(t.slug, 'shelters');
    expect(res.status).toBe(404);
    expect(await res.text()).toContain('This finder page is not available');
  });

  it('refuses bad settings with the field named', async () => {
    for (const [body, field] of [
      [{ enabled: true, frameOrigins: ['https://orrin-health.example/embed'] }, 'frameOrigins.0'],
      [{ enabled: true, k: 0 }, 'k'],
      [{ enabled: 'yes' }, 'enabled'],
      [{ enabled: true, colour: 'teal' }, 'body'],
    ] as const) {
      const res = await put(t, 'shelters', body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      const { error } = (await res.json()) as { error: { field: string } };
      expect(error.field, JSON.stringify(body)).toBe(field);
    }
    expect((await put(t, 'no-such-list', { enabled: true })).status).toBe(404);
  });

  it('switched on: serves the page with its browser key, k capped by the build, and a strict CSP', async () => {
    const res = await put(t, 'shelters', { enabled: true, frameOrigins: [EMBEDDER], k: 5 });
    expect(res.status).toBe(200);
    const view = (await res.json()) as FinderBody;
    expect(view).toMatchObject({ enabled: true, frameOrigins: [EMBEDDER], k: 5, requestsPerMinute: 30 });
    expect(view.embed).toContain(`src="${view.url}"`);
    expect(view.embed).toContain('allow="geolocation"');

    const served = await page(t.slug, 'shelters');
    expect(served.status).toBe(200);
    const csp = served.headers.get('content-security-policy')!;
    expect(csp).toContain(`frame-ancestors 'self' ${EMBEDDER}`);
    expect(csp).toContain("connect-src 'self'");
    expect(csp).not.toMatch(/unsafe-inline|\*/);
    const config = pageConfig(await served.text());
    // Built for k = 2 (publishDataset's maxK): the page asks for at most that.
    expect(config).toMatchObject({ dataset: 'shelters', k: 2 });

    const { keys } = (await (await adminRequest(t, 'GET', '/v1/admin/keys')).json()) as { keys: Array<{ id: string; kind: string; datasets: string[]; origins: string[]; secret: string }> };
    const key = keys.find((k) => k.id === view.keyId)!;
    expect(key).toMatchObject({ kind: 'browser', datasets: ['shelters'], origins: ['self'], secret: config.apiKey });
    // Its origins change only with the page: a PATCH that would drop "self" is refused.
    const patched = await adminRequest(t, 'PATCH', `/v1/admin/keys/${key.id}`, JSON.stringify({ origins: [EMBEDDER] }), 'application/json');
    expect(patched.status).toBe(409);
    expect(((await patched.json()) as { error: { code: string } }).error.code).toBe('key_of_finder');
  });

  it("lets the page's key work from this server's pages only, and for its own dataset only", async () => {
    const { apiKey } = pageConfig(await (await page(t.slug, 'shelters')).text());
    expect((await manifestWith(apiKey, { origin: BASE })).status).toBe(200);
    // A same-origin GET carries no Origin header; the browser's Sec-Fetch-Site says where it came from.
    expect((await manifestWith(apiKey, { 'sec-fetch-site': 'same-origin' })).status).toBe(200);
    const elsewhere = await manifestWith(apiKey, { origin: EMBEDDER });
    expect(elsewhere.status).toBe(403);
    expect(((await elsewhere.json()) as { error: { code: string } }).error.code).toBe('origin_not_allowed');
    expect((await manifestWith(apiKey, { 'sec-fetch-site': 'cross-site' })).status).toBe(403);
    const other = await manifestWith(apiKey, { origin: BASE }, 'pharmacies');
    expect(((await other.json()) as { error: { code: string } }).error.code).toBe('key_scope');
  });

  it('is served for its own tenant only', async () => {
    const stranger = await createTestTenant();
    expect((await page(stranger.slug, 'shelters')).status).toBe(404);
    expect((await put(stranger, 'shelters', { enabled: true })).status).toBe(404);
  });

  it('switched off: the key is revoked at once and the page is gone; on again makes a new key', async () => {
    const { apiKey } = pageConfig(await (await page(t.slug, 'shelters')).text());
    const off = (await (await put(t, 'shelters', { enabled: false })).json()) as FinderBody;
    expect(off).toMatchObject({ enabled: false, keyId: null, frameOrigins: [EMBEDDER] });
    expect((await page(t.slug, 'shelters')).status).toBe(404);
    const refused = await manifestWith(apiKey, { origin: BASE });
    expect(((await refused.json()) as { error: { code: string } }).error.code).toBe('credential_revoked');
    const on = (await (await put(t, 'shelters', { enabled: true })).json()) as FinderBody;
    expect(on.enabled).toBe(true);
    expect(pageConfig(await (await page(t.slug, 'shelters')).text()).apiKey).not.toBe(apiKey);
  });
});
