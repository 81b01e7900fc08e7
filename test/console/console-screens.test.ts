import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { geoContains } from 'd3-geo';
import type { Feature, FeatureCollection } from 'geojson';
import type { Page } from 'playwright-core';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import world from 'world-atlas/countries-110m.json';
import { readCsv } from '../../core/geo/csv.ts';
import type { Manifest } from '../../core/geo/manifest.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { connectAdmin } from '../../sdk/admin.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { launchBrowser } from './browser.ts';
import { coastCsv, coastSites } from './coast-sites.ts';

/**
 * The console's screens as a provider meets them (issue 17, console items 1, 2, 5, 6 and 7), in
 * real headless Chromium against the product started as `npm start` starts it: nothing scrolls
 * sideways at 1280 x 800 or 1024 x 768, the map draws land and sea where Natural Earth has them,
 * a veiled version says what it discloses, cells edit in place, editors see plain words, and the
 * console asks its questions in its own dialogs. Screenshots go to test-results/console/screens-*.
 */
const SHOTS = join(ROOT, 'test-results', 'console');
const COAST = 'skarvik-coast';
const VEILED = 'skarvik-veiled';
const SIZES = [
  [1280, 800],
  [1024, 768],
] as const;
// The colours the map paints (console/src/map/geography.ts): sea is the canvas, land is filled over it.
const SEA = [0xdf, 0xe9, 0xf3] as const;

let product: ProductServer;
let BASE = '';
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let page: Page;
let users: Record<'tenantAdmin' | 'tenantEditor' | 'operator', { email: string; password: string }>;
let adminToken = '';
const coast = coastSites(80, 17_2026, 'SK');
const veiled = coastSites(40, 9_117, 'SV');
const pageErrors: string[] = [];
/** Browser-native prompt()/confirm()/alert(): the console must ask nothing through them. */
const nativeDialogs: string[] = [];
const outsideRequests: string[] = [];

const status = () => page.locator('main .status').first();
const shot = (name: string) => page.screenshot({ path: join(SHOTS, `screens-${name}.png`) });

/** The page is exactly as wide as the window: no sideways scrolling. */
async function widths(): Promise<{ scroll: number; viewport: number }> {
  return page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, viewport: window.innerWidth }));
}

/** Where an element sits against the window (the element must exist). */
async function placement(selector: string) {
  return page.locator(selector).first().evaluate((el) => {
    const r = el.getBoundingClientRect();
    return { left: r.left, right: r.right, top: r.top, bottom: r.bottom, width: window.innerWidth, height: window.innerHeight };
  });
}

async function expectOnScreen(selector: string): Promise<void> {
  const p = await placement(selector);
  expect(p.left, `${selector} left edge`).toBeGreaterThanOrEqual(0);
  expect(p.right, `${selector} right edge`).toBeLessThanOrEqual(p.width);
  expect(p.top, `${selector} top edge`).toBeGreaterThanOrEqual(0);
  expect(p.bottom, `${selector} bottom edge`).toBeLessThanOrEqual(p.height);
}

async function signIn(who: keyof typeof users): Promise<void> {
  if ((await page.getByRole('button', { name: 'Sign out' }).count()) > 0) await page.getByRole('button', { name: 'Sign out' }).click();
  await page.getByLabel('Email', { exact: true }).fill(users[who].email);
  await page.getByLabel('Password', { exact: true }).fill(users[who].password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await expect.poll(() => page.locator('header .who').textContent(), { timeout: 90_000 }).toContain(users[who].email);
}

async function go(tab: string): Promise<void> {
  await page.locator('header nav').getByRole('button', { name: tab, exact: true }).click();
}

/** Colours of canvas pixels (CSS pixels from the canvas's inner top left; the test runs at device scale 1). */
async function mapPixels(points: ReadonlyArray<readonly [number, number]>): Promise<number[][]> {
  return page.evaluate((pts) => {
    const canvas = document.querySelector('canvas.map') as HTMLCanvasElement;
    const g = canvas.getContext('2d')!;
    return pts.map(([x, y]) => Array.from(g.getImageData(x, y, 1, 1).data.slice(0, 3)));
  }, points as Array<[number, number]>);
}

/** The latitude and longitude the console reports under the pointer at a canvas pixel. */
async function pointerAt(x: number, y: number): Promise<[number, number]> {
  const origin = await page.locator('canvas.map').evaluate((c) => {
    const r = c.getBoundingClientRect();
    return { left: r.left + c.clientLeft, top: r.top + c.clientTop };
  });
  await page.mouse.move(origin.left + x, origin.top + y);
  const pointer = page.locator('#map-pointer');
  await expect.poll(() => pointer.getAttribute('data-lat')).not.toBeNull();
  return [Number(await pointer.getAttribute('data-lat')), Number(await pointer.getAttribute('data-lon'))];
}

async function canvasSize(): Promise<{ w: number; h: number }> {
  return page.locator('canvas.map').evaluate((c) => ({ w: c.clientWidth, h: c.clientHeight }));
}

const isSea = (rgb: number[]) => rgb.every((v, i) => Math.abs(v - SEA[i]!) <= 3);

// Natural Earth 1:110m land (public domain) through world-atlas, and d3-geo's spherical
// point-in-polygon test: the outside reference for where land is.
const topology = world as unknown as Topology<{ countries: GeometryCollection; land: GeometryCollection }>;
const land = feature(topology, topology.objects.land) as FeatureCollection | Feature;
const onLand = (lat: number, lon: number) => geoContains(land, [lon, lat]);
/** Land (or sea) for certain: the point and eight around it, half a degree of latitude and a degree of longitude away. */
function clearly(lat: number, lon: number): 'land' | 'sea' | null {
  const around = [-1, 0, 1].flatMap((i) => [-1, 0, 1].map((j) => onLand(lat + 0.5 * i, lon + 1.0 * j)));
  return around.every(Boolean) ? 'land' : around.every((x) => !x) ? 'sea' : null;
}

beforeAll(async () => {
  if (!existsSync(join(ROOT, '.console-build', 'console', 'index.html'))) {
    throw new Error('the console is not built: run `npm run build:console` (npm test and npm start do it first)');
  }
  mkdirSync(SHOTS, { recursive: true });
  product = await startProduct('screens');
  BASE = product.base;
  const credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { adminToken: string; users: typeof users };
  users = credentials.users;
  adminToken = credentials.adminToken;
  // Two invented datasets of our own: eight columns over land and sea, and the same coast veiled.
  const admin = connectAdmin({ endpoint: BASE, token: adminToken });
  for (const [slug, sites, layout] of [[COAST, coast, 'auto'], [VEILED, veiled, 'veiled']] as const) {
    await admin.ensureDataset(slug, `Skarvik coast sites (invented, ${layout})`);
    const { version } = await admin.uploadSiteTable(slug, coastCsv(sites));
    await admin.build(slug, version, layout, 1);
    await admin.publish(slug, version);
  }
  browser = await launchBrowser();
  page = await browser.context.newPage();
  page.on('pageerror', (e) => pageErrors.push(e.message));
  page.on('dialog', (d) => {
    nativeDialogs.push(`${d.type()}: ${d.message()}`);
    void d.dismiss();
  });
  page.on('request', (r) => {
    if (!r.url().startsWith(BASE) && !r.url().startsWith('blob:') && !r.url().startsWith('data:')) outsideRequests.push(r.url());
  });
  await page.goto(`${BASE}/console/`);
});

afterAll(async () => {
  await browser?.close();
  await product?.stop();
});

describe('console screens at 1280 x 800 and 1024 x 768 (issue 17)', () => {
  it('signs in as the tenant admin', async () => {
    await signIn('tenantAdmin');
    await page.getByRole('grid').waitFor({ timeout: 90_000 });
  });

  it('keeps every screen as wide as the window: the 8-column table scrolls in its own box, problems and status stay in sight', async () => {
    for (const [width, height] of SIZES) {
      await page.setViewportSize({ width, height });
      await go('Site table');
      if (width === 1280) {
        await page.locator(`#sheet-dataset option[value="${COAST}"]`).waitFor({ state: 'attached', timeout: 90_000 });
        await page.locator('#sheet-dataset').selectOption(COAST);
        await page.getByRole('button', { name: 'Open active version' }).click();
        await expect.poll(() => status().textContent(), { timeout: 90_000 }).toBe(`Opened ${COAST} version 1: 80 rows`);
        // One wrong latitude, so the problems panel has something to say about the disabled Save.
        await page.getByRole('grid').focus();
        await page.keyboard.press('Control+Home');
        await page.keyboard.press('ArrowRight');
        await page.keyboard.press('ArrowRight');
        await page.keyboard.type('95.5');
        await page.keyboard.press('Enter');
        await expect.poll(() => page.locator('#problems-title').textContent(), { timeout: 90_000 }).toBe('1 problem to fix before saving');
      }
      await page.evaluate(() => new Promise((r) => requestAnimationFrame(r)));
      expect(await widths()).toEqual({ scroll: width, viewport: width });
      // The table is wider than its box (64 + 8 x 150 px): it scrolls there, not the page.
      expect(await page.locator('.grid-scroll').evaluate((el) => el.scrollWidth > el.clientWidth)).toBe(true);
      await expect.poll(() => page.getByRole('button', { name: 'Save as draft version' }).isDisabled()).toBe(true);
      for (const selector of ['main .status', '#problems-title', '.problems li button', '#cell-message', 'button.primary', '.grid-scroll']) await expectOnScreen(selector);
      await expectOnScreen('.columns .grid-note'); // "80 rows x 8 columns", under the grid
      await shot(`01-site-table-${width}x${height}`);

      const screens: Array<[string, string]> = [
        ['Versions', 'tr[data-version]'],
        ['Map', 'canvas.map[data-geography="drawn"]'],
        ['Cost', '#cost-table'],
        ['Keys & usage', '#usage-queries'],
        ['Team & activity', '#audit-table tbody tr'],
      ];
      for (const [tab, ready] of screens) {
        await go(tab);
        await page.locator(ready).first().waitFor({ timeout: 90_000 });
        expect(await widths(), `${tab} at ${width}x${height}`).toEqual({ scroll: width, viewport: width });
        await expectOnScreen('main .status');
        await shot(`02-${tab.split(' ')[0]!.toLowerCase()}-${width}x${height}`);
      }
    }
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  it('edits a cell in place with F2 or Enter (caret at the end), while typing on a cell replaces it', async () => {
    await go('Site table');
    const grid = page.getByRole('grid');
    await grid.focus();
    await page.keyboard.press('Control+Home');
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('ArrowRight');
    const cell = (r: number) => page.locator(`#cell-${r}-1`);
    const first = (await cell(1).textContent())!;
    expect(first).toBe(coast[1]!.name);
    await page.keyboard.press('F2');
    const editor = page.locator('input.grid-editor');
    expect(await editor.evaluate((el: HTMLInputElement) => [el.value, el.selectionStart, el.selectionEnd])).toEqual([first, first.length, first.length]);
    await page.keyboard.type(' annex');
    await page.keyboard.press('Enter');
    await expect.poll(() => cell(1).textContent()).toBe(`${first} annex`);
    // Enter on the next cell edits it the same way.
    const second = (await cell(2).textContent())!;
    await page.keyboard.press('Enter');
    await page.keyboard.type(' east');
    await page.keyboard.press('Enter');
    await expect.poll(() => cell(2).textContent()).toBe(`${second} east`);
    // Typing on a selected cell replaces its text, as spreadsheets do.
    await page.keyboard.type('Quarry Clinic');
    await page.keyboard.press('Enter');
    await expect.poll(() => cell(3).textContent()).toBe('Quarry Clinic');
    await shot('03-edited-in-place');
    for (let i = 0; i < 3; i++) await page.keyboard.press('Control+Z');
    await expect.poll(() => cell(1).textContent()).toBe(first);
    await expect.poll(() => cell(3).textContent()).toBe(coast[3]!.name);
  });

  it('draws land where Natural Earth has land and sea where it has sea, a graticule, and the coordinates under the pointer, loading nothing from other hosts', async () => {
    await go('Map');
    await page.locator('canvas.map[data-geography="drawn"]').waitFor({ timeout: 90_000 });
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toMatch(/^v1: 80 sites/);
    for (const layer of ['heat of list lengths', 'region outlines', 'sites', 'graticule']) await page.getByLabel(layer, { exact: true }).uncheck();
    const { w, h } = await canvasSize();
    const samples: Array<{ x: number; y: number; truth: 'land' | 'sea'; lat: number; lon: number }> = [];
    for (let i = 1; i < 14; i++) {
      for (let j = 1; j < 9; j++) {
        const [x, y] = [Math.round((w * i) / 14), Math.round((h * j) / 9)];
        if (x < 240 && y > h - 50) continue; // the scale bar
        const [lat, lon] = await pointerAt(x, y);
        const truth = clearly(lat, lon);
        if (truth) samples.push({ x, y, truth, lat, lon });
      }
    }
    // The invented coast really has both: enough clear samples of each to mean something.
    expect(samples.filter((s) => s.truth === 'land').length).toBeGreaterThanOrEqual(10);
    expect(samples.filter((s) => s.truth === 'sea').length).toBeGreaterThanOrEqual(10);
    const colours = await mapPixels(samples.map((s) => [s.x, s.y] as const));
    const wrong = samples.filter((s, k) => isSea(colours[k]!) !== (s.truth === 'sea')).map((s) => `${s.truth} at ${s.lat.toFixed(2)}, ${s.lon.toFixed(2)}`);
    expect(wrong).toEqual([]);
    await expect.poll(() => page.locator('#map-pointer').textContent()).toMatch(/^Pointer: lat -?\d+\.\d{5}, lon -?\d+\.\d{5} \(/);
    await shot('04-map-land-and-sea');

    // The graticule alone: every line pixel lies on a multiple of the stated step, in latitude or longitude.
    await page.getByLabel('land and borders', { exact: true }).uncheck();
    await page.getByLabel('graticule', { exact: true }).check();
    const step = Number(/graticule every ([\d.]+)°/.exec((await page.locator('#map-note').textContent())!)![1]);
    expect(step).toBeGreaterThan(0);
    const lines = await page.evaluate((sea: number[]) => {
      const canvas = document.querySelector('canvas.map') as HTMLCanvasElement;
      const { width, height } = canvas;
      const data = canvas.getContext('2d')!.getImageData(0, 0, width, height).data;
      const out: Array<[number, number]> = [];
      for (let y = 2; y < height - 50; y += 3) {
        for (let x = 2; x < width - 2; x += 3) {
          const k = (y * width + x) * 4;
          if (Math.abs(data[k]! - sea[0]!) + Math.abs(data[k + 1]! - sea[1]!) + Math.abs(data[k + 2]! - sea[2]!) > 12) out.push([x, y]);
        }
      }
      return out;
    }, [...SEA]);
    expect(lines.length).toBeGreaterThan(50);
    const random = seededRandom(2026);
    const [lat0, lon0] = await pointerAt(200, 200);
    const [lat1, lon1] = await pointerAt(201, 201);
    const perPixel = { lat: Math.abs(lat1 - lat0), lon: Math.abs(lon1 - lon0) };
    const off = (v: number) => Math.abs(v - Math.round(v / step) * step);
    for (let i = 0; i < 8; i++) {
      const [x, y] = lines[Math.floor(random() * lines.length)]!;
      const [lat, lon] = await pointerAt(x, y);
      expect(Math.min(off(lat) / perPixel.lat, off(lon) / perPixel.lon), `graticule pixel at ${lat}, ${lon}`).toBeLessThanOrEqual(2.5);
    }
    for (const layer of ['land and borders', 'heat of list lengths', 'region outlines', 'sites']) await page.getByLabel(layer, { exact: true }).check();
    await shot('05-map-all-layers');
    expect(outsideRequests).toEqual([]);
  });

  it('answers a click with the nearest site (as geokdbush finds it) and says distances are straight-line', async () => {
    await page.locator('canvas.map').focus();
    await page.keyboard.press('Enter'); // inspect the centre
    const [lat, lon] = (await page.locator('#map-info dd').first().textContent())!.split(',').map(Number) as [number, number];
    await expect.poll(() => page.locator('#map-nearest').textContent()).toContain(geokdbushNearest(coast, lat, lon).id);
    await expect.poll(() => page.locator('#map-distance-note').textContent()).toBe('Distances are straight-line (great-circle) distances on the Earth, not by road or path.');
  });

  it('shows what a veiled manifest discloses (coarse grid, cells, regions, k, padded list) instead of empty list lengths', async () => {
    await page.locator('#map-dataset').selectOption(VEILED);
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toMatch(/^v1: 40 sites, veiled: /);
    const response = await fetch(`${BASE}/v1/admin/datasets/${VEILED}/versions/1/manifest`, { headers: { authorization: `Bearer ${adminToken}` } });
    const manifest = (await response.json()) as Manifest;
    if (manifest.layout.kind !== 'veiled') throw new Error(`expected a veiled build, got ${manifest.layout.kind}`);
    const g = manifest.layout;
    // Coarse cells per MANIFEST.md: the box's rows x cols plus a south band, a north band and a gap column where they exist.
    const cells = (g.rows + (g.latMin > -90 ? 1 : 0) + (g.latMax < 90 ? 1 : 0)) * (g.cols + (g.lonMax - g.lonMin < 360 ? 1 : 0));
    const facts = page.locator('#map-facts');
    const text = (await facts.textContent())!;
    for (const fact of [
      `Coarse grid${g.rows} × ${g.cols} cells`,
      `Coarse cells${cells.toLocaleString('en-GB')}`,
      `Regions in all${g.regions.toLocaleString('en-GB')} (how many in each cell is not published)`,
      `Sites40`,
      `Nearest sites servedk = ${manifest.maxK ?? 1}`,
      `Candidate listpadded to ${manifest.record.slotsPerRegion} slots`,
      `Cell record${g.partitionBits.toLocaleString('en-GB')} bits per coarse cell`,
    ]) {
      expect(text).toContain(fact);
    }
    expect(text).not.toMatch(/Longest list|Mean list|\b0 regions/);
    expect(await page.getByLabel('heat of list lengths', { exact: true }).isDisabled()).toBe(true);
    await page.locator('canvas.map').focus();
    await page.keyboard.press('Enter');
    const [lat, lon] = (await page.locator('#map-info dd').first().textContent())!.split(',').map(Number) as [number, number];
    await expect.poll(() => page.locator('#map-nearest').textContent()).toContain(geokdbushNearest(veiled, lat, lon).id);
    await expect.poll(() => page.locator('#map-info').textContent()).toContain('straight-line (great-circle)');
    await shot('06-map-veiled-1280x800');
    await page.setViewportSize({ width: 1024, height: 768 });
    expect(await widths()).toEqual({ scroll: 1024, viewport: 1024 });
    await shot('06-map-veiled-1024x768');
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  it('asks in its own dialogs: a new dataset (a refused name is corrected in place) and a new column', async () => {
    await go('Site table');
    await page.getByRole('button', { name: 'New dataset…' }).click();
    const dialog = page.getByRole('dialog', { name: 'New dataset' });
    await dialog.getByLabel('Short name of the dataset').fill('Skarvik Spare!');
    await dialog.getByRole('button', { name: 'Create dataset' }).click();
    await expect.poll(() => dialog.locator('.status.bad').textContent(), { timeout: 90_000 }).toMatch(/.+/);
    await shot('07-dialog-refused-name');
    await dialog.getByLabel('Short name of the dataset').fill('skarvik-spare');
    await dialog.getByRole('button', { name: 'Create dataset' }).click();
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toBe('Created dataset skarvik-spare: paste or import its sites, then save');
    expect(await page.getByRole('dialog').count()).toBe(0);
    await page.getByRole('grid').focus();
    await page.keyboard.press('Control+Home');
    await page.keyboard.press('End');
    await page.getByRole('button', { name: 'Add column' }).click();
    const column = page.getByRole('dialog', { name: 'Add a column' });
    await column.getByLabel('Name of the new column').fill('opening hours');
    await column.getByRole('button', { name: 'Add column' }).click();
    await expect.poll(() => page.locator('.grid-hcell').allTextContents()).toEqual(['id', 'name', 'lat', 'lon', 'opening hours']);
    expect(nativeDialogs).toEqual([]);
  });

  it('takes a revoked key\'s secret off the screen and lists activity in words, keys by their labels', async () => {
    await go('Keys & usage');
    await page.getByLabel('Label', { exact: true }).fill('skarvik probe app');
    await page.getByRole('button', { name: 'Create key' }).click();
    await expect.poll(() => page.locator('#new-key-secret').textContent(), { timeout: 90_000 }).toMatch(/^nvk_/);
    await page.getByRole('button', { name: 'Revoke skarvik probe app' }).click();
    const confirm = page.getByRole('dialog', { name: 'Revoke the key “skarvik probe app”?' });
    await confirm.waitFor();
    await shot('08-revoke-dialog');
    await confirm.getByRole('button', { name: 'Revoke key' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toBe('Revoked skarvik probe app');
    expect(await page.locator('#new-key-secret').count()).toBe(0);
    expect(await page.locator('#key-secret').textContent()).toBe('');

    await go('Team & activity');
    const activity = page.locator('#audit-table tbody');
    await expect.poll(() => activity.textContent(), { timeout: 90_000 }).toContain('Revoked an API key');
    const text = (await activity.textContent())!;
    expect(text).toContain('API key “skarvik probe app”');
    expect(text).toContain('Created a dataset');
    expect(text).not.toMatch(/[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/);
    expect(await page.locator('#audit-table td.action').allTextContents()).not.toContainEqual(expect.stringMatching(/^[a-z]+\.[a-z]+$/));
    await shot('09-activity-in-words');
    expect(nativeDialogs).toEqual([]);
  });

  it('offers the least role, editor, when adding a person', async () => {
    await go('Team & activity');
    await page.locator('#users-table tbody tr').first().waitFor({ timeout: 90_000 });
    expect(await page.locator('#user-role').inputValue()).toBe('tenant_editor');
    expect(await page.locator('#user-role option:checked').textContent()).toBe('editor');
  });

  it('downloads the statement as two CSV files of one table each, amounts in cents (EUR has 2 decimals in ISO 4217)', async () => {
    await go('Keys & usage');
    const download = async (button: string) => {
      const [file] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: button }).click()]);
      return readCsv(readFileSync((await file.path())!, 'utf8'));
    };
    const lines = await download('Download statement (CSV)');
    expect(lines.problems).toEqual([]);
    const [header, ...rows] = lines.records;
    expect(header).toEqual(['tenant', 'month', 'currency', 'item', 'quantity', 'unit', 'unit_price', 'priced_per', 'amount', 'amount_micros']);
    for (const row of rows) expect(row).toHaveLength(header!.length);
    expect(rows.map((r) => r[3])).toEqual(['monthly_base', 'queries', 'transfer', 'multiplications', 'total']);
    const cents = (amount: string) => {
      expect(amount).toMatch(/^\d+\.\d\d$/);
      return Number(amount.replace('.', ''));
    };
    // Each line: its micro-units rounded half up to whole cents (1 cent = 10,000 micro-units).
    for (const r of rows.slice(0, 4)) expect(cents(r[8]!)).toBe(Math.floor((Number(r[9]) + 5_000) / 10_000));
    const total = rows[4]!;
    expect(cents(total[8]!)).toBe(rows.slice(0, 4).reduce((a, r) => a + cents(r[8]!), 0));
    expect(Number(total[9])).toBe(rows.slice(0, 4).reduce((a, r) => a + Number(r[9]), 0));
    await expect.poll(() => page.locator('#statement-total').textContent(), { timeout: 90_000 }).toBe(`EUR ${total[8]} so far (the month is still running)`);

    const days = await download('Download daily usage (CSV)');
    expect(days.problems).toEqual([]);
    const [dayHeader, ...dayRows] = days.records;
    expect(dayHeader).toEqual(['tenant', 'month', 'day', 'queries', 'rejected', 'bytes_in', 'bytes_out', 'multiplications']);
    for (const row of dayRows) expect(row).toHaveLength(dayHeader!.length);
    const usage = (await (await fetch(`${BASE}/v1/admin/usage?month=${total[1]}`, { headers: { authorization: `Bearer ${adminToken}` } })).json()) as { totals: { queries: number } };
    expect(dayRows.reduce((a, r) => a + Number(r[3]), 0)).toBe(usage.totals.queries);
    expect(Number(rows[1]![4])).toBe(usage.totals.queries);
  });

  it('shows an editor only what an editor may do, in plain words, on screens as wide as the window', async () => {
    await signIn('tenantEditor');
    expect(await page.locator('header nav').getByRole('button', { name: 'Keys & usage' }).count()).toBe(0);
    for (const [width, height] of SIZES) {
      await page.setViewportSize({ width, height });
      await go('Usage');
      await page.locator('#usage-queries').waitFor({ timeout: 90_000 });
      await expect.poll(() => page.locator('#keys-for-editors').textContent()).toContain('ask one of your admins');
      expect(await page.locator('#key-label').count()).toBe(0);
      expect(await page.getByRole('button', { name: /Create key|Revoke|Download statement/ }).count()).toBe(0);
      expect(await page.locator('body').innerText()).not.toMatch(/tenant_admin|needs the/);
      expect(await widths()).toEqual({ scroll: width, viewport: width });
      await shot(`10-editor-usage-${width}x${height}`);
      await go('Team & activity');
      await expect.poll(() => page.locator('#team-for-editors').isVisible()).toBe(true);
      expect(await page.locator('#users-table').isVisible()).toBe(false);
      expect(await page.locator('body').innerText()).not.toMatch(/tenant_admin|needs the/);
      expect(await widths()).toEqual({ scroll: width, viewport: width });
      await shot(`11-editor-team-${width}x${height}`);
    }
    await page.setViewportSize({ width: 1280, height: 800 });
    expect(pageErrors).toEqual([]);
  });

  it('gives the operator a Password button, and tariff fields whose examples read as hints, not values', async () => {
    await signIn('operator');
    await page.locator('tr[data-tenant]').first().waitFor({ timeout: 90_000 });
    for (const [width, height] of SIZES) {
      await page.setViewportSize({ width, height });
      expect(await widths()).toEqual({ scroll: width, viewport: width });
      await shot(`12-operator-${width}x${height}`);
    }
    await page.setViewportSize({ width: 1280, height: 800 });
    for (const field of ['queryMicros', 'gbMicros', 'millionMultiplicationsMicros', 'monthlyBaseMicros']) {
      const look = await page.locator(`#tariff-${field}`).evaluate((el: HTMLInputElement) => {
        const hint = getComputedStyle(el, '::placeholder');
        return { value: el.value, placeholder: el.placeholder, hintStyle: hint.fontStyle, hintColour: hint.color, textColour: getComputedStyle(el).color };
      });
      expect(look.value).toBe('');
      expect(look.placeholder).toMatch(/^e\.g\. \d/);
      expect(look.hintStyle).toBe('italic');
      expect(look.hintColour).not.toBe(look.textColour);
    }
    await page.getByRole('button', { name: 'Password…' }).click();
    const dialog = page.getByRole('dialog', { name: 'Change my password' });
    await dialog.getByLabel('Current password').fill(users.operator.password);
    await dialog.getByLabel('New password (at least 12 characters)').fill('the operator picks a passphrase');
    await dialog.getByLabel('New password again').fill('the operator picks a passphrase');
    await dialog.getByRole('button', { name: 'Change password' }).click();
    await expect.poll(() => dialog.locator('.status').textContent(), { timeout: 90_000 }).toBe('Password changed. Your other sessions have been signed out.');
    await shot('13-operator-password');
    await dialog.getByRole('button', { name: 'Close' }).click();
    const fresh = await fetch(`${BASE}/v1/session`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email: users.operator.email, password: 'the operator picks a passphrase' }),
    });
    expect(fresh.status).toBe(200);
    expect(nativeDialogs).toEqual([]);
    expect(pageErrors).toEqual([]);
    expect(outsideRequests).toEqual([]);
  });
});
