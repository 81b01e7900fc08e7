import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { greatCircleMeters } from '../../core/geo/distance.ts';
import { queryCost } from '../../console/src/cost/query-cost.ts';
import { formatPrice, queryPrice } from '../../console/src/cost/tariff.ts';
import type { Manifest } from '../../core/geo/manifest.ts';
import { DEMO_TARIFF } from '../../scripts/dev/seed.ts';
import { connect } from '../../sdk/client.ts';
import { connectAdmin } from '../../sdk/admin.ts';
import { clusteredTownsCsv } from '../../scripts/demo/clustered-towns.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { launchBrowser } from './browser.ts';
import { fenwickSites, fenwickTsv } from './flow-data.ts';

/**
 * The data admin's walk through the console (issue 6), in real headless Chromium against the
 * real product started as `npm start` starts it (own port, own state folder): sign in, paste 50
 * rows, fix the marked cell, save, build, publish, answer a query through the SDK, roll back,
 * see the map and the usage. A screenshot per step goes to test-results/console/.
 */
const SHOTS = join(ROOT, 'test-results', 'console');
const DATASET = 'fenwick-clinics';
let product: ProductServer;
let BASE = '';
let scratch = '';
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let page: Page;
let apiKey = '';
let adminEmail = '';
let editorPassword = '';
const pageErrors: string[] = [];

async function shot(name: string): Promise<void> {
  await page.screenshot({ path: join(SHOTS, `${name}.png`) });
}

const status = () => page.locator('main .status').first();

/** Every form control on the screen has an accessible name (label, aria-label or labelledby). */
async function unlabelledControls(): Promise<string[]> {
  return page.evaluate(() =>
    Array.from(document.querySelectorAll('main input, main select, main textarea, main button, main [role="grid"], main canvas[tabindex]'))
      .filter((el) => {
        const e = el as HTMLInputElement;
        if (e.type === 'hidden' || (e as HTMLElement).offsetParent === null) return false;
        const named = (e.labels && e.labels.length > 0) || e.getAttribute('aria-label') || e.getAttribute('aria-labelledby') || (e.tagName === 'BUTTON' && e.textContent!.trim() !== '');
        return !named;
      })
      .map((e) => e.outerHTML.slice(0, 120)),
  );
}

beforeAll(async () => {
  if (!existsSync(join(ROOT, '.console-build', 'console', 'index.html'))) {
    throw new Error('the console is not built: run `npm run build:console` (npm test and npm start do it first)');
  }
  mkdirSync(SHOTS, { recursive: true });
  product = await startProduct('console');
  BASE = product.base;
  scratch = product.scratch;
  browser = await launchBrowser();
  await browser.context.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: BASE });
  page = await browser.context.newPage();
  page.on('pageerror', (e) => pageErrors.push(e.message));
});

afterAll(async () => {
  await browser?.close();
  await product?.stop();
});

describe('console: the data admin flow in headless Chromium', () => {
  it('serves the console at /console/ with nothing from outside and shows the cautions', async () => {
    const outside: string[] = [];
    page.on('request', (r) => {
      if (!r.url().startsWith(BASE) && !r.url().startsWith('blob:') && !r.url().startsWith('data:')) outside.push(r.url());
    });
    await page.goto(`${BASE}/`);
    expect(page.url()).toBe(`${BASE}/console/`);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    for (const caution of ['not always the nearest by road or travel time', 'out of date', 'emergency number', 'not the network address or the timing']) {
      await expect.poll(() => page.locator('.cautions').textContent(), { timeout: 90_000 }).toContain(caution);
    }
    expect(await unlabelledControls()).toEqual([]);
    await shot('01-sign-in');
    expect(outside).toEqual([]);
  });

  it('signs in with the tenant admin account (a wrong password is refused with a message)', async () => {
    const credentials = JSON.parse(readFileSync(join(scratch, 'home', 'dev-credentials.json'), 'utf8')) as {
      apiKey: string;
      users: Record<string, { email: string; password: string }>;
    };
    apiKey = credentials.apiKey;
    const admin = credentials.users.tenantAdmin!;
    adminEmail = admin.email;
    await page.getByLabel('Email', { exact: true }).fill(admin.email);
    await page.getByLabel('Password', { exact: true }).fill('not the password');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await expect.poll(() => page.locator('.status.bad').textContent(), { timeout: 90_000 }).toMatch(/.+/);
    expect(await page.getByRole('grid').count()).toBe(0);
    await page.getByLabel('Password', { exact: true }).fill(admin.password);
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.getByRole('grid').waitFor({ timeout: 90_000 });
    await expect.poll(() => page.locator('header .who').textContent(), { timeout: 90_000 }).toContain(admin.email);
    await expect.poll(() => page.locator('header .who').textContent(), { timeout: 90_000 }).toContain('tenant admin');
    await shot('02-signed-in');
  });

  it('creates a dataset, pastes 50 tab-separated rows and marks the invalid cell with its message', async () => {
    await page.getByRole('button', { name: 'New dataset…' }).click();
    await page.getByRole('dialog', { name: 'New dataset' }).getByLabel('Short name of the dataset').fill(DATASET);
    await page.getByRole('dialog', { name: 'New dataset' }).getByRole('button', { name: 'Create dataset' }).click();
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toMatch(/Created dataset fenwick-clinics/);
    await page.evaluate((text) => navigator.clipboard.writeText(text), fenwickTsv(6, '95.5'));
    await page.getByRole('grid').focus();
    await page.keyboard.press('Control+V');
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toMatch(/Pasted 50 rows and the header row/);
    const invalid = page.locator('.grid-cell[aria-invalid="true"]');
    await invalid.first().waitFor();
    await expect.poll(() => invalid.count(), { timeout: 90_000 }).toBe(1);
    await expect.poll(() => invalid.first().getAttribute('title'), { timeout: 90_000 }).toBe('lat must be between -90 and 90, got 95.5 (lat and lon may be swapped: this lon would be a valid lat)');
    await expect.poll(() => page.locator('#problems-title').textContent(), { timeout: 90_000 }).toBe('1 problem to fix before saving');
    await expect.poll(() => page.getByRole('button', { name: 'Save as draft version' }).isDisabled(), { timeout: 90_000 }).toBe(true);
    expect(await unlabelledControls()).toEqual([]);
    await shot('03-pasted-with-error');
  });

  it('is usable from the keyboard alone: move, edit, cancel, undo, redo, fill down, with a visible focus', async () => {
    const grid = page.getByRole('grid');
    await grid.focus();
    await page.keyboard.press('Control+Home');
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('ArrowRight');
    // Row 2, column "name": the active cell carries the focus ring.
    const active = page.locator('.grid-cell.active');
    await expect.poll(() => active.getAttribute('id'), { timeout: 90_000 }).toBe('cell-1-1');
    await expect.poll(() => grid.getAttribute('aria-activedescendant'), { timeout: 90_000 }).toBe('cell-1-1');
    const ring = await active.evaluate((el) => getComputedStyle(el).outlineWidth + ' ' + getComputedStyle(el).outlineStyle);
    expect(ring).toBe('3px solid');
    await page.keyboard.type('Fenwick Night Shelter');
    await page.keyboard.press('Enter');
    await expect.poll(() => page.locator('#cell-1-1').textContent(), { timeout: 90_000 }).toBe('Fenwick Night Shelter');
    await expect.poll(() => active.getAttribute('id'), { timeout: 90_000 }).toBe('cell-2-1'); // Enter moves down
    await page.keyboard.press('F2');
    await page.keyboard.type(' (typo)');
    await page.keyboard.press('Escape');
    await expect.poll(() => page.locator('#cell-2-1').textContent(), { timeout: 90_000 }).toBe('Fenwick Shelter 3');
    await page.keyboard.press('Control+Z');
    await expect.poll(() => page.locator('#cell-1-1').textContent(), { timeout: 90_000 }).toBe('Fenwick Pharmacy 2');
    await page.keyboard.press('Control+Y');
    await expect.poll(() => page.locator('#cell-1-1').textContent(), { timeout: 90_000 }).toBe('Fenwick Night Shelter');
    await page.keyboard.press('Control+Z');
    // Fill down over phone numbers, then undo it: the table is back as pasted.
    await page.keyboard.press('End');
    await page.keyboard.press('Shift+ArrowDown');
    await page.keyboard.press('Shift+ArrowDown');
    await page.keyboard.press('Control+D');
    // Rows 3 to 5 selected in the phone column: rows 4 and 5 take row 3's number.
    await expect.poll(() => page.locator('#cell-4-4').textContent(), { timeout: 90_000 }).toBe('+999 4021 0102');
    await expect.poll(() => page.locator('#cell-3-4').textContent(), { timeout: 90_000 }).toBe('+999 4021 0102');
    await page.keyboard.press('Control+Z');
    await expect.poll(() => page.locator('#cell-3-4').textContent(), { timeout: 90_000 }).toBe('+999 4021 0103');
    await expect.poll(() => page.locator('#cell-4-4').textContent(), { timeout: 90_000 }).toBe('+999 4021 0104');
    await shot('04-keyboard');
  });

  it('fixes the error by jumping to it and typing, then saves a draft version', async () => {
    await page.getByRole('button', { name: /Row 7, lat: lat must be between/ }).click();
    await expect.poll(() => page.locator('#cell-message').textContent(), { timeout: 90_000 }).toContain('Row 7, lat: lat must be between -90 and 90, got 95.5');
    await page.keyboard.type('-76.31');
    await page.keyboard.press('Enter');
    await expect.poll(() => page.locator('.grid-cell[aria-invalid="true"]').count(), { timeout: 90_000 }).toBe(0);
    await expect.poll(() => page.locator('#problems-title').textContent(), { timeout: 90_000 }).toBe('No problems');
    await shot('05-fixed');
    await page.getByRole('button', { name: 'Save as draft version' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/Saved as version 1 of fenwick-clinics \(draft, 50 sites\)/);
    await shot('06-saved');
  });

  it('builds and publishes the version, and an app finds the exact nearest site through the SDK', async () => {
    await page.getByRole('button', { name: 'Versions' }).click();
    await page.getByRole('button', { name: 'Build v1' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/Built fenwick-clinics v1/);
    await shot('07-built');
    await page.getByRole('button', { name: 'Publish v1' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/v1 of fenwick-clinics is active/);
    await expect.poll(() => page.locator('tr[data-version="1"] .state').textContent(), { timeout: 90_000 }).toBe('active');
    // The version names its author: the admin who saved it from the table.
    await expect.poll(() => page.locator('tr[data-version="1"] .author').textContent(), { timeout: 90_000 }).toBe(adminEmail);
    expect(await unlabelledControls()).toEqual([]);
    await shot('08-published');

    const sites = fenwickSites().map((s, i) => (i === 6 ? { ...s, lat: -76.31 } : s));
    const client = connect({ endpoint: BASE, apiKey });
    // geokdbush (npm) as the outside reference for which site is nearest.
    const index = new KDBush(sites.length);
    for (const s of sites) index.add(s.lon, s.lat);
    index.finish();
    for (const [lat, lon] of [[-76.2, 59.0], [-76.0, 60.1], [-76.6, 58.0]] as const) {
      const answer = await client.nearest(DATASET, { lat, lon });
      expect(answer.version).toBe(1);
      const reference = sites[around(index, lon, lat, 1)[0]!]!;
      expect(answer.results[0]!.id).toBe(reference.id);
      expect(Math.abs(answer.results[0]!.distanceMeters - greatCircleMeters(lat, lon, reference.lat, reference.lon))).toBeLessThan(3);
    }
  });

  it('saves a second version, compares it cell by cell with the first, publishes it and rolls back after a confirmation naming both', async () => {
    await page.getByRole('button', { name: 'Site table' }).click();
    const grid = page.getByRole('grid');
    await grid.focus();
    await page.keyboard.press('Control+Home');
    await page.keyboard.press('ArrowRight');
    await page.keyboard.press('Enter');
    await page.keyboard.press('Control+A');
    await page.keyboard.type('Fenwick Walk-in Clinic');
    await page.keyboard.press('Enter');
    await page.getByRole('button', { name: 'Save as draft version' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/Saved as version 2/);
    await page.getByRole('button', { name: 'Versions' }).click();
    // Built for the 2 nearest this time: the matrix column says so, and an app may ask for two.
    await page.getByLabel('Nearest sites an app may ask for (k, 1-8)').fill('2');
    await page.getByRole('button', { name: 'Build v2' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/Built fenwick-clinics v2/);
    await expect.poll(() => page.locator('tr[data-version="2"] .matrix').textContent(), { timeout: 90_000 }).toMatch(/^[\d,]+ × [\d,]+ · (adaptive|grid) · k = 2$/);
    await page.getByRole('button', { name: 'Publish v2' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/v2 of fenwick-clinics is active \(was v1\)/);
    const two = await connect({ endpoint: BASE, apiKey }).nearest(DATASET, { lat: -76.2, lon: 59.0 }, { k: 2 });
    expect(two.version).toBe(2);
    expect(two.results).toHaveLength(2);

    await page.locator('#diff-from').selectOption('1');
    await page.locator('#diff-to').selectOption('2');
    await page.getByRole('button', { name: 'Compare' }).click();
    await expect.poll(() => page.locator('#diff-summary').textContent(), { timeout: 90_000 }).toBe('v1 → v2: 0 added, 0 removed, 1 changed, 49 unchanged');
    await expect.poll(() => page.locator('#diff-table tbody tr').textContent(), { timeout: 90_000 }).toBe('changedFH-001name: Fenwick Clinic 1 → Fenwick Walk-in Clinic');
    await shot('09-compared');

    await page.locator('#rollback-to').selectOption('1');
    await page.getByRole('button', { name: 'Roll back…' }).click();
    const dialog = page.getByRole('dialog');
    await expect.poll(() => dialog.textContent(), { timeout: 90_000 }).toContain('Roll back fenwick-clinics from v2 (active now) to v1?');
    await shot('10-rollback-confirm');
    await dialog.getByRole('button', { name: 'Roll back to v1' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/Rolled back fenwick-clinics from v2 to v1; v2 still answers apps in flight for \d+ s/);
    await expect.poll(() => page.locator('tr[data-version="1"] .state').textContent(), { timeout: 90_000 }).toBe('active');
    await expect.poll(() => page.locator('tr[data-version="2"]').textContent(), { timeout: 90_000 }).toMatch(/ready \(answers apps in flight until .+ UTC\)/);
    await shot('11-rolled-back');
    const answer = await connect({ endpoint: BASE, apiKey }).nearest(DATASET, { lat: -76.2, lon: 59.0 });
    expect(answer.version).toBe(1);
  });

  it('follows a build started elsewhere (the CLI) in its row, stage and percent, until it is ready, without another reload', async () => {
    const credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { adminToken: string };
    const admin = connectAdmin({ endpoint: BASE, token: credentials.adminToken });
    // 20,000 invented sites: a build of some seconds, long enough to watch.
    const { version } = await admin.uploadSiteTable(DATASET, clusteredTownsCsv(20_000));
    const queued = await fetch(`${BASE}/v1/admin/datasets/${DATASET}/versions/${version}/build`, { method: 'POST', headers: { authorization: `Bearer ${credentials.adminToken}` } });
    expect(queued.status).toBe(202);
    await page.getByRole('button', { name: 'Refresh' }).click();
    // No further click: the screen reads the list again while a version builds.
    await expect.poll(() => page.locator(`tr[data-version="${version}"] .row-progress`).textContent(), { timeout: 30_000 }).toMatch(/^\s+(queued|reading|building|details|regions|matrix|plan|hash|writing-matrix|writing-manifest) · \d+%$/);
    await shot('11b-building-elsewhere');
    await expect.poll(() => page.locator(`tr[data-version="${version}"] .state`).textContent(), { timeout: 90_000 }).toBe('ready');
    await expect.poll(() => page.locator(`tr[data-version="${version}"] .matrix`).getAttribute('title'), { timeout: 10_000 }).toMatch(/s per query by the cost model\) of \d+ layouts weighed/);
    expect(await page.locator(`tr[data-version="${version}"] .row-progress`).count()).toBe(0);
    await shot('11c-built-elsewhere');
  });

  it('shows the map with regions and heat, and answers a click with the region, candidates and nearest site', async () => {
    await page.getByRole('button', { name: 'Map' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toMatch(/v1: 50 sites, \d+ regions, lists rebuilt/);
    const canvas = page.locator('canvas.map');
    await canvas.focus();
    await page.keyboard.press('ArrowLeft');
    await page.keyboard.press('+');
    await page.keyboard.press('Enter'); // inspect the centre
    const point = (await page.locator('#map-info dd').first().textContent())!.split(',').map(Number) as [number, number];
    const sites = fenwickSites().map((s, i) => (i === 6 ? { ...s, lat: -76.31 } : s));
    const brute = sites.reduce((best, s) => (greatCircleMeters(point[0], point[1], s.lat, s.lon) < greatCircleMeters(point[0], point[1], best.lat, best.lon) ? s : best));
    await expect.poll(() => page.locator('#map-nearest').textContent(), { timeout: 90_000 }).toContain(brute.id);
    await expect.poll(() => page.locator('#map-info').textContent(), { timeout: 90_000 }).toContain('equals a search of every site');
    expect(await unlabelledControls()).toEqual([]);
    await shot('12-map');
  });

  it('shows the cost of one query from the manifest', async () => {
    await page.getByRole('button', { name: 'Cost' }).click();
    const table = page.locator('#cost-table');
    await table.waitFor();
    const manifest = (await (await fetch(`${BASE}/v1/datasets/${DATASET}/manifest`, { headers: { authorization: `Bearer ${apiKey}` } })).json()) as Manifest;
    await expect.poll(() => table.textContent(), { timeout: 90_000 }).toContain('Price per query at your tariff');
    const text = (await table.textContent())!;
    // The demo tenant's seeded tariff, applied to this version's bytes and metered products.
    const cost = queryCost(manifest);
    const price = queryPrice({ currency: 'EUR', ...DEMO_TARIFF }, cost.bytes[0]!.up + cost.bytes[0]!.down, cost.billedProducts);
    expect(text).toContain(`Price per query at your tariff${formatPrice(price.total, 'EUR')} (query EUR 0.001500 + transfer`);
    expect(text).toContain('Monthly baseEUR 49.99');
    expect(text).toContain(`${manifest.matrix.rows.toLocaleString('en-GB')} rows × ${manifest.matrix.columns.toLocaleString('en-GB')} columns`);
    expect(text).toContain(`Queries that would read the whole matrix${manifest.matrix.columns.toLocaleString('en-GB')} (one per column`);
    await shot('13-cost');
  });

  it('creates an API key shown once, revokes it, and shows the usage', async () => {
    await page.getByRole('button', { name: 'Keys & usage' }).click();
    await page.getByLabel('Label', { exact: true }).fill('fenwick finder app');
    await page.getByRole('button', { name: 'Create key' }).click();
    const secret = (await page.locator('#new-key-secret').textContent())!;
    expect(secret).toMatch(/^nvk_/);
    const fresh = await connect({ endpoint: BASE, apiKey: secret }).nearest(DATASET, { lat: -76.1, lon: 59.3 });
    expect(fresh.results).toHaveLength(1);
    await page.getByRole('button', { name: 'I have stored it' }).click();
    await expect.poll(() => page.locator('#new-key-secret').count(), { timeout: 90_000 }).toBe(0);
    await page.getByRole('button', { name: 'Revoke fenwick finder app' }).click();
    await page.getByRole('dialog', { name: 'Revoke the key “fenwick finder app”?' }).getByRole('button', { name: 'Revoke key' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toBe('Revoked fenwick finder app');
    await expect(connect({ endpoint: BASE, apiKey: secret }).nearest(DATASET, { lat: -76.1, lon: 59.3 })).rejects.toThrow(/revoked/);
    const adminToken = JSON.parse(readFileSync(join(scratch, 'home', 'dev-credentials.json'), 'utf8')).adminToken as string;
    const month = new Date().toISOString().slice(0, 7);
    const usage = (await (await fetch(`${BASE}/v1/admin/usage?month=${month}`, { headers: { authorization: `Bearer ${adminToken}` } })).json()) as { totals: { queries: number } };
    await page.getByRole('button', { name: 'Refresh usage' }).click();
    expect(usage.totals.queries).toBeGreaterThanOrEqual(5);
    await expect.poll(() => page.locator('#usage-queries').textContent(), { timeout: 90_000 }).toBe(usage.totals.queries.toLocaleString('en-GB'));
    await expect.poll(() => page.locator('#statement-total').textContent(), { timeout: 90_000 }).toMatch(/^EUR \d+\.\d\d so far \(the month is still running\)$/);
    // The statement downloads as CSV: its queries line counts what the usage report counts.
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Download statement (CSV)' }).click()]);
    expect(download.suggestedFilename()).toBe(`nearveil-statement-${month}.csv`);
    const csv = readFileSync((await download.path())!, 'utf8').split('\r\n');
    expect(csv[0]).toBe('tenant,month,currency,item,quantity,unit,unit_price,priced_per,amount,amount_micros');
    // Amounts in cents, half up (EUR: 2 decimals, ISO 4217), micro-units in their own column.
    const queryMicros = usage.totals.queries * 1500;
    const queryCents = Math.floor((queryMicros + 5_000) / 10_000);
    expect(csv).toContain(`demo,${month},EUR,queries,${usage.totals.queries},query,0.0015,1,${Math.floor(queryCents / 100)}.${String(queryCents % 100).padStart(2, '0')},${queryMicros}`);
    expect(csv.find((l) => l.startsWith(`demo,${month},EUR,monthly_base,`))).toBe(`demo,${month},EUR,monthly_base,1,month,49.99,1,49.99,49990000`);
    expect(await unlabelledControls()).toEqual([]);
    await shot('14-keys-usage');
  });

  it('adds an editor (first password shown once) and lists who did what', async () => {
    await page.getByRole('button', { name: 'Team & activity' }).click();
    await expect.poll(() => page.locator('#users-table').textContent(), { timeout: 90_000 }).toContain(`${adminEmail} (you)`);
    await page.getByLabel('Email', { exact: true }).fill('wren.editor@fenwick.example');
    await page.locator('#user-role').selectOption('tenant_editor');
    await page.getByRole('button', { name: 'Add user' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toBe('Added wren.editor@fenwick.example as editor');
    const firstPassword = (await page.locator('#new-user-password').textContent())!;
    expect(firstPassword.length).toBeGreaterThanOrEqual(12);
    await expect.poll(() => page.locator('tr[data-user="wren.editor@fenwick.example"] .role').textContent(), { timeout: 90_000 }).toBe('editor');
    // Say Wren lost it: the admin gives a new one, shown once, and the first stops working.
    await page.getByRole('button', { name: 'New password for wren.editor@fenwick.example' }).click();
    await page.getByRole('dialog', { name: 'New password for wren.editor@fenwick.example?' }).getByRole('button', { name: 'Make a new password' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toBe('wren.editor@fenwick.example has a new password');
    editorPassword = (await page.locator('#reset-user-password').textContent())!;
    expect(editorPassword).toMatch(/^[A-Za-z0-9_-]{24}$/);
    const withFirst = await fetch(`${BASE}/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'wren.editor@fenwick.example', password: firstPassword }) });
    expect(withFirst.status).toBe(401);
    const activity = page.locator('#audit-table');
    for (const line of ['Rolled back to a version', `dataset ${DATASET} v1`, 'Added a person as editor', 'Gave a new password', 'Revoked an API key']) {
      await expect.poll(() => activity.textContent(), { timeout: 90_000 }).toContain(line);
    }
    expect(await unlabelledControls()).toEqual([]);
    await shot('15-team-activity');
    expect(pageErrors).toEqual([]);
  });

  it('keeps a 100,000-row table in the grid with only the visible rows in the page', async () => {
    await page.getByRole('button', { name: 'Site table' }).click();
    const lines = ['id,name,lat,lon'];
    for (let i = 0; i < 100_000; i++) lines.push(`B${i},Bulk site ${i},${(40 + (i % 1000) / 100).toFixed(4)},${(-120 + Math.floor(i / 1000) / 10).toFixed(4)}`);
    await page.getByLabel('Import CSV or GeoJSON').setInputFiles({ name: 'bulk.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n')) });
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toMatch(/Imported 100,000 rows from bulk.csv/);
    const grid = page.getByRole('grid');
    await expect.poll(() => grid.getAttribute('aria-rowcount'), { timeout: 90_000 }).toBe('100002'); // header + rows + the row for new sites
    await grid.focus();
    await page.keyboard.press('Control+End'); // the empty row for new sites, last column
    await expect.poll(() => page.locator('.grid-cell.active').getAttribute('id')).toBe('cell-100000-3');
    await page.keyboard.press('ArrowUp');
    await page.keyboard.press('Control+ArrowLeft');
    await expect.poll(() => page.locator('.grid-cell.active').textContent()).toBe('B99999');
    // Only the rows in sight (plus a few either side) are in the DOM.
    const rendered = await page.locator('.grid-body .grid-row').count();
    expect(rendered).toBeGreaterThan(10);
    expect(rendered).toBeLessThan(60);
    await page.keyboard.press('PageUp');
    await page.keyboard.press('Control+Home');
    await expect.poll(() => page.locator('.grid-cell.active').textContent()).toBe('B0');
    await expect.poll(() => page.locator('#problems-title').textContent(), { timeout: 90_000 }).toBe('No problems');
    await shot('16-100000-rows');
  });

  it('lets the new editor sign in with the first password, change it, and keeps admin screens from them', async () => {
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.getByLabel('Email', { exact: true }).fill('wren.editor@fenwick.example');
    await page.getByLabel('Password', { exact: true }).fill(editorPassword);
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await expect.poll(() => page.locator('header .who').textContent(), { timeout: 90_000 }).toContain('wren.editor@fenwick.example · Harrow Vale Care Network (demo) · tenant editor');
    await page.getByRole('button', { name: 'Password…' }).click();
    const dialog = page.getByRole('dialog', { name: 'Change my password' });
    await dialog.getByLabel('Current password').fill(editorPassword);
    await dialog.getByLabel('New password (at least 12 characters)').fill('wren picks a passphrase');
    await dialog.getByLabel('New password again').fill('wren picks a passphrase');
    await dialog.getByRole('button', { name: 'Change password' }).click();
    await expect.poll(() => dialog.locator('.status').textContent(), { timeout: 90_000 }).toBe('Password changed. Your other sessions have been signed out.');
    expect(await unlabelledControls()).toEqual([]);
    await shot('17-password-changed');
    await dialog.getByRole('button', { name: 'Close' }).click();
    const fresh = await fetch(`${BASE}/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'wren.editor@fenwick.example', password: 'wren picks a passphrase' }) });
    expect(fresh.status).toBe(200);
    await page.getByRole('button', { name: 'Team & activity' }).click();
    await expect.poll(() => status().textContent(), { timeout: 90_000 }).toBe('People and activity are for tenant admins; ask one of them for changes.');
    // Editors build but do not publish or roll back: the console offers neither.
    await page.getByRole('button', { name: 'Versions' }).click();
    await expect.poll(() => page.locator('tr[data-version="2"] .state').textContent(), { timeout: 90_000 }).toBe('ready');
    expect(await page.getByRole('button', { name: /^Publish v/ }).count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Roll back…' }).isVisible()).toBe(false);
    expect(pageErrors).toEqual([]);
  });

  it('gives the operator its own screen: tenants, a new tenant with its first admin, a tariff, a statement', async () => {
    const operator = (JSON.parse(readFileSync(join(scratch, 'home', 'dev-credentials.json'), 'utf8')) as { users: Record<string, { email: string; password: string }> }).users.operator!;
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.getByLabel('Email', { exact: true }).fill(operator.email);
    await page.getByLabel('Password', { exact: true }).fill(operator.password);
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await expect.poll(() => page.locator('tr[data-tenant="demo"]').textContent(), { timeout: 90_000 }).toContain('Harrow Vale Care Network (demo)');
    expect(await page.getByRole('grid').count()).toBe(0);
    await page.getByLabel('Slug', { exact: true }).fill('orrin-shelters');
    await page.getByLabel('Name', { exact: true }).fill('Orrin Shelters (invented)');
    await page.getByLabel('First admin email').fill('lead@orrin.example');
    await page.getByRole('button', { name: 'Create tenant' }).click();
    await expect.poll(() => page.locator('.status.good').textContent(), { timeout: 90_000 }).toBe('Created tenant orrin-shelters');
    const firstPassword = (await page.locator('#tenant-admin-password').textContent())!;
    const lead = await fetch(`${BASE}/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'lead@orrin.example', password: firstPassword }) });
    expect(lead.status).toBe(200);
    await expect.poll(() => page.locator('#tariff-now').textContent(), { timeout: 90_000 }).toBe('orrin-shelters has no tariff yet: its statements are refused until one is set. Prices in EUR.');
    for (const [label, value] of [['Per query', '0.002'], ['Per GB moved', '0.1'], ['Per million products', '0.003'], ['Monthly base', '10']]) {
      await page.getByLabel(label!, { exact: true }).fill(value!);
    }
    await page.getByRole('button', { name: 'Set tariff' }).click();
    await expect.poll(() => page.locator('#tariff-now').textContent(), { timeout: 90_000 }).toContain('EUR 0.002000 per answered query, EUR 0.100000 per GB');
    await expect.poll(() => page.locator('#tariff-now').textContent(), { timeout: 90_000 }).toContain(`(set by ${operator.email})`);
    // Its tariff is the one the server bills with: the new tenant's first statement is its base.
    const month = new Date().toISOString().slice(0, 7);
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: `orrin-shelters ${month} (CSV)` }).click()]);
    const csv = readFileSync((await download.path())!, 'utf8');
    expect(csv).toContain(`orrin-shelters,${month},EUR,monthly_base,1,month,10,1,10.00,10000000`);
    expect(csv).toContain(`orrin-shelters,${month},EUR,total,,,,,10.00,10000000`);
    expect(await unlabelledControls()).toEqual([]);
    await shot('18-operator');
    expect(pageErrors).toEqual([]);
  });
});
