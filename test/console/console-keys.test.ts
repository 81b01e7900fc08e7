import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_DATASET } from '../../scripts/dev/seed.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { launchBrowser } from './browser.ts';

/**
 * The keys screen's web-page keys, refusals and finder page, in real headless Chromium against
 * the product started as `npm start` starts it. What the console shows is checked against what
 * the API answers to a separate admin-token client, and the finder page against what its URL
 * serves. Screenshots go to test-results/console/console-keys-*.png.
 */
const SHOTS = join(ROOT, 'test-results', 'console');
const LABEL = 'harrow vale pages';
const LISTED = ['https://harrow-vale.example', 'http://127.0.0.1:5173'];
const CHANGED = 'https://clinics.harrow-vale.example';
const ELSEWHERE = 'https://elsewhere.example';

let product: ProductServer;
let BASE = '';
let adminToken = '';
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let page: Page;
let browserKey = '';
let finderUrl = '';
const keyPosts: string[] = [];
const nativeDialogs: string[] = [];
const pageErrors: string[] = [];

interface ListedKey { id: string; label: string; kind: string; origins?: string[]; requestsPerMinute?: number; secret?: string; revokedAt: string | null }
const adminGet = async <T>(path: string): Promise<T> => {
  const res = await fetch(BASE + path, { headers: { authorization: `Bearer ${adminToken}` } });
  expect(res.status, path).toBe(200);
  return (await res.json()) as T;
};
const listedKey = async (label: string) => (await adminGet<{ keys: ListedKey[] }>('/v1/admin/keys')).keys.find((k) => k.label === label && k.revokedAt === null);
const row = (label: string) => page.locator('#keys-table tbody tr', { has: page.locator('td:first-child', { hasText: label }) });

beforeAll(async () => {
  if (!existsSync(join(ROOT, '.console-build', 'console', 'index.html'))) {
    throw new Error('the console is not built: run `npm run build:console` (npm test and npm start do it first)');
  }
  mkdirSync(SHOTS, { recursive: true });
  product = await startProduct('keys');
  BASE = product.base;
  const credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as {
    adminToken: string;
    users: Record<string, { email: string; password: string }>;
  };
  adminToken = credentials.adminToken;
  browser = await launchBrowser();
  await browser.context.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: BASE });
  page = await browser.context.newPage();
  page.on('pageerror', (e) => pageErrors.push(e.message));
  page.on('dialog', (d) => {
    nativeDialogs.push(`${d.type()}: ${d.message()}`);
    void d.dismiss();
  });
  page.on('request', (r) => {
    if (r.method() === 'POST' && new URL(r.url()).pathname === '/v1/admin/keys') keyPosts.push(r.postData() ?? '');
  });
  await page.goto(`${BASE}/console/`);
  const admin = credentials.users.tenantAdmin!;
  await page.getByLabel('Email', { exact: true }).fill(admin.email);
  await page.getByLabel('Password', { exact: true }).fill(admin.password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.locator('header .who', { hasText: admin.email }).waitFor({ timeout: 90_000 });
  await page.locator('header nav').getByRole('button', { name: 'Keys & usage', exact: true }).click();
  await page.locator('#usage-queries').waitFor({ timeout: 90_000 });
}, 240_000);

afterAll(async () => {
  await browser?.close();
  await product?.stop();
});

describe('console keys screen: web-page keys, refusals and the finder page', () => {
  it('names the bad origin line and sends nothing, then makes the web-page key with its origins and rate', async () => {
    await page.getByLabel('For web pages').check();
    await page.getByLabel('Label', { exact: true }).fill(LABEL);
    const origins = page.getByLabel('Origins of the pages, one per line');
    const problem = page.locator('#key-form-problem');
    // A path, then a trailing slash (RFC 6454 section 6.2: an origin serializes as scheme://host[:port], nothing after).
    for (const [text, expected] of [
      [`${LISTED[0]}\n\nhttps://harrow-vale.example/find`, /^Origins, line 3: "https:\/\/harrow-vale\.example\/find" has a path \(\/find\).*write https:\/\/harrow-vale\.example$/],
      [`${LISTED[0]}/`, /^Origins, line 1: "https:\/\/harrow-vale\.example\/" ends with a slash; write https:\/\/harrow-vale\.example$/],
      ['', /^Origins: list at least one origin/],
    ] as const) {
      await origins.fill(text);
      await page.getByRole('button', { name: 'Create key' }).click();
      await expect.poll(() => problem.textContent()).toMatch(expected);
      expect(await origins.getAttribute('aria-invalid')).toBe('true');
    }
    expect(await problem.getAttribute('role')).toBe('alert');
    expect(keyPosts).toEqual([]);

    await origins.fill(LISTED.join('\n'));
    await page.getByRole('form', { name: 'Create an API key' }).getByLabel('Requests a minute per visitor').fill('12');
    await page.getByRole('button', { name: 'Create key' }).click();
    await expect.poll(() => page.locator('#new-key-secret').textContent(), { timeout: 90_000 }).toMatch(/^nvk_/);
    browserKey = (await page.locator('#new-key-secret').textContent())!;
    expect(await problem.textContent()).toBe('');
    expect(keyPosts).toHaveLength(1);
    expect(JSON.parse(keyPosts[0]!)).toEqual({ kind: 'browser', label: LABEL, origins: LISTED, requestsPerMinute: 12 });
    // What the API holds (a separate admin-token client), and what the row shows of it.
    const stored = await listedKey(LABEL);
    expect(stored).toMatchObject({ kind: 'browser', origins: LISTED, requestsPerMinute: 12, secret: browserKey });
    await expect.poll(() => row(LABEL).locator('td.origins div').allTextContents(), { timeout: 90_000 }).toEqual(LISTED);
    expect(await row(LABEL).locator('td').nth(1).textContent()).toBe('web pages');
    expect(await row(LABEL).locator('td').nth(3).textContent()).toBe('12 per visitor');
  });

  it('shows and copies the public key again at any time', async () => {
    await page.getByRole('button', { name: 'Hide key' }).click();
    expect(await page.locator('#key-secret').textContent()).toBe('');
    await row(LABEL).getByRole('button', { name: 'Show key' }).click();
    expect(await page.locator('#browser-key-secret').textContent()).toBe(browserKey);
    await page.locator('#key-secret').getByRole('button', { name: 'Copy key' }).click();
    await expect.poll(() => page.evaluate(() => navigator.clipboard.readText())).toBe(browserKey);
  });

  it('changes the origins and rate in a dialog (a bad line keeps it open with the message)', async () => {
    await row(LABEL).getByRole('button', { name: 'Change…' }).click();
    const dialog = page.getByRole('dialog', { name: `Change the key “${LABEL}”` });
    await dialog.waitFor();
    expect(await dialog.getByLabel('Origins of the pages, one per line').inputValue()).toBe(LISTED.join('\n'));
    await dialog.getByLabel('Origins of the pages, one per line').fill(`${CHANGED}\nclinics.harrow-vale.example`);
    await dialog.getByRole('button', { name: 'Save changes' }).click();
    await expect.poll(() => dialog.locator('#change-status').textContent()).toMatch(/^Origins, line 2: "clinics\.harrow-vale\.example" is not a web address/);
    expect((await listedKey(LABEL))!.origins).toEqual(LISTED);
    await dialog.getByLabel('Origins of the pages, one per line').fill(CHANGED);
    await dialog.getByLabel('Requests a minute per visitor').fill('20');
    await dialog.getByRole('button', { name: 'Save changes' }).click();
    await expect.poll(() => page.getByRole('dialog').count(), { timeout: 90_000 }).toBe(0);
    await expect.poll(() => row(LABEL).locator('td.origins').textContent(), { timeout: 90_000 }).toBe(CHANGED);
    expect(await row(LABEL).locator('td').nth(3).textContent()).toBe('20 per visitor');
    expect(await listedKey(LABEL)).toMatchObject({ origins: [CHANGED], requestsPerMinute: 20 });
  });

  it('lists a refusal by reason in plain words and by key label', async () => {
    await expect.poll(() => page.locator('#refusals-empty').isVisible(), { timeout: 90_000 }).toBe(true);
    // A page of an origin the key does not list (Fetch standard: the Origin header names the page's origin).
    const res = await fetch(`${BASE}/v1/datasets/${DEMO_DATASET}/manifest`, { headers: { authorization: `Bearer ${browserKey}`, origin: ELSEWHERE } });
    expect(res.status).toBe(403);
    expect(((await res.json()) as { error: { code: string } }).error.code).toBe('origin_not_allowed');
    await page.getByRole('button', { name: 'Refresh usage' }).click();
    const rows = page.locator('#refusals-table tbody tr');
    await expect.poll(() => rows.count(), { timeout: 90_000 }).toBe(1);
    expect(await rows.first().locator('td').allTextContents()).toEqual(['Sent from a web page whose origin the key does not list', LABEL, '1']);
    expect(await page.locator('#refusals-empty').isVisible()).toBe(false);
    const month = new Date().toISOString().slice(0, 7);
    const usage = await adminGet<{ refusals: Array<{ reason: string; keyLabel: string; count: number }> }>(`/v1/admin/usage?month=${month}`);
    expect(usage.refusals).toEqual([expect.objectContaining({ reason: 'origin_not_allowed', keyLabel: LABEL, count: 1 })]);
  });

  it('switches the finder page on: the shown link opens the page, the embed code is the API’s', async () => {
    const panel = page.locator('#finder-panel');
    await panel.getByLabel('Dataset for the page').selectOption(DEMO_DATASET);
    await page.locator('#finder-panel[aria-busy="false"]').waitFor({ timeout: 90_000 });
    expect(await panel.locator('#finder-state').textContent()).toBe('off');
    const frames = panel.getByLabel(/Sites that may show it in a frame/);
    await frames.fill('https://harrow-vale.example/embed');
    await panel.getByRole('button', { name: 'Switch the page on' }).click();
    await expect.poll(() => panel.locator('#finder-problem').textContent()).toMatch(/^Frame origins, line 1: .* has a path \(\/embed\)/);
    expect((await adminGet<{ enabled: boolean }>(`/v1/admin/datasets/${DEMO_DATASET}/finder`)).enabled).toBe(false);
    await frames.fill(LISTED[0]!);
    await panel.getByLabel(/Sites listed/).fill('2');
    await panel.getByRole('button', { name: 'Switch the page on' }).click();
    await expect.poll(() => panel.locator('#finder-state').textContent(), { timeout: 90_000 }).toBe('on');
    const view = await adminGet<{ url: string; embed: string; frameOrigins: string[]; k: number; enabled: boolean }>(`/v1/admin/datasets/${DEMO_DATASET}/finder`);
    expect(view).toMatchObject({ enabled: true, frameOrigins: [LISTED[0]], k: 2 });
    finderUrl = view.url;
    expect(await panel.locator('#finder-url').getAttribute('href')).toBe(finderUrl);
    expect(await panel.locator('#finder-embed').inputValue()).toBe(view.embed);
    await panel.getByRole('button', { name: 'Copy embed code' }).click();
    await expect.poll(() => page.evaluate(() => navigator.clipboard.readText())).toBe(view.embed);
    // The page's own key appears in the list as "this server's own pages", changed only from the panel.
    await expect.poll(() => row(`Finder page: ${DEMO_DATASET}`).locator('td.origins').textContent(), { timeout: 90_000 }).toBe('this server’s own pages');
    expect(await row(`Finder page: ${DEMO_DATASET}`).getByRole('button', { name: 'Change…' }).count()).toBe(0);

    await panel.screenshot({ path: join(SHOTS, 'console-keys-finder-on.png') });
    const [tab] = await Promise.all([page.waitForEvent('popup'), panel.locator('#finder-url').click()]);
    const served = await tab.reload();
    expect(served!.status()).toBe(200);
    await expect.poll(() => tab.locator('h1').textContent(), { timeout: 90_000 }).toMatch(/^Find the nearest/);
    await tab.close();
  });

  it('asks before switching the page off; Cancel keeps it, yes makes the link a 404', async () => {
    const panel = page.locator('#finder-panel');
    await panel.getByRole('button', { name: 'Switch the page off' }).click();
    const ask = page.getByRole('dialog', { name: `Switch off the finder page of “${DEMO_DATASET}”?` });
    await ask.waitFor();
    await ask.getByRole('button', { name: 'Cancel' }).click();
    expect((await fetch(finderUrl)).status).toBe(200);
    expect(await panel.locator('#finder-state').textContent()).toBe('on');

    await panel.getByRole('button', { name: 'Switch the page off' }).click();
    await ask.getByRole('button', { name: 'Switch the page off' }).click();
    await expect.poll(() => panel.locator('#finder-state').textContent(), { timeout: 90_000 }).toBe('off');
    expect((await fetch(finderUrl)).status).toBe(404);
    expect(await panel.locator('#finder-url').count()).toBe(0);
  });

  it('fits the window at 1280 x 800 and 1024 x 768 (screenshots in test-results/console)', async () => {
    for (const [width, height] of [
      [1280, 800],
      [1024, 768],
    ] as const) {
      await page.setViewportSize({ width, height });
      await page.getByLabel('For web pages').check();
      const size = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, viewport: window.innerWidth }));
      expect(size, `${width}x${height}`).toEqual({ scroll: width, viewport: width });
      await page.screenshot({ path: join(SHOTS, `console-keys-${width}x${height}.png`), fullPage: true });
    }
    expect(nativeDialogs).toEqual([]);
    expect(pageErrors).toEqual([]);
  });
});
