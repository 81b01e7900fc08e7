import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { VersionInfo } from '../../console/src/api/nearveil.ts';
import { defaultBuildChoice, kDropWarning, sessionChoiceStore } from '../../console/src/versions/build-options.ts';
import { greatCircleMeters } from '../../core/geo/distance.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { connectAdmin } from '../../sdk/admin.ts';
import { datasetCommand } from '../../sdk/cli/commands/dataset-lifecycle.ts';
import { CliError } from '../../sdk/cli/cli-error.ts';
import { connect } from '../../sdk/client.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { launchBrowser } from './browser.ts';

/**
 * The versions screen in headless Chromium against the product as `npm start` runs it: build
 * options that start from the active version and warn before k drops (issue 17, item 3), one
 * word for each state and a dataset list that follows publishes (item 4), rename and delete
 * (item 8), and the CLI's `dataset rename` / `dataset delete` against the same server.
 * Screenshots at 1280 x 800 go to test-results/console/versions-*.png.
 */
const SHOTS = join(ROOT, 'test-results', 'console');
const SLUG = 'tarn-landings';
const NAME = 'Tarn Reach ferry landings';

/** 30 invented ferry landings of the invented Tarn Reach, in open ocean far from any real place (seeded). */
function tarnSites(moved = false): Array<{ id: string; name: string; lat: number; lon: number }> {
  const random = seededRandom(1717);
  return Array.from({ length: 30 }, (_, i) => ({
    id: `TR-${String(i + 1).padStart(2, '0')}`,
    name: `Tarn Landing ${i + 1}`,
    lat: Number((-52.6 + 0.4 * random() + (moved && i === 4 ? 0.05 : 0)).toFixed(5)),
    lon: Number((-141 + random()).toFixed(5)),
  }));
}
const csvOf = (sites: ReturnType<typeof tarnSites>) => ['id,name,lat,lon', ...sites.map((s) => `${s.id},${s.name},${s.lat},${s.lon}`)].join('\n');

let product: ProductServer;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let page: Page;
let credentials: { adminToken: string; apiKey: string; users: Record<string, { email: string; password: string }> };
let admin: ReturnType<typeof connectAdmin>;
const pageErrors: string[] = [];

const shot = (name: string) => page.screenshot({ path: join(SHOTS, `versions-${name}.png`) });
const status = () => page.locator('main .status').first().textContent();
const pickerText = () => page.locator(`#versions-dataset option[value="${SLUG}"]`).textContent();
const mainText = () => page.locator('main').innerText();
/** Horizontal overflow: the page is exactly as wide as the window (nothing scrolls sideways). */
const pageWidth = () => page.evaluate(() => ({ document: document.documentElement.scrollWidth, window: window.innerWidth }));

async function signInAs(who: 'tenantAdmin' | 'tenantEditor'): Promise<void> {
  const user = credentials.users[who]!;
  await page.getByLabel('Email', { exact: true }).fill(user.email);
  await page.getByLabel('Password', { exact: true }).fill(user.password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await expect.poll(() => page.locator('header .who').textContent(), { timeout: 90_000 }).toContain(user.email);
  await page.getByRole('button', { name: 'Versions', exact: true }).click();
}

async function openDataset(slug: string): Promise<void> {
  await expect.poll(() => page.locator(`#versions-dataset option[value="${slug}"]`).count(), { timeout: 90_000 }).toBe(1);
  await page.locator('#versions-dataset').selectOption(slug);
  await expect.poll(status, { timeout: 90_000 }).toMatch(new RegExp(`^${slug}: \\d+ versions?`));
}

beforeAll(async () => {
  if (!existsSync(join(ROOT, '.console-build', 'console', 'index.html'))) {
    throw new Error('the console is not built: run `npm run build:console` (npm test and npm start do it first)');
  }
  mkdirSync(SHOTS, { recursive: true });
  product = await startProduct('versions');
  credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as typeof credentials;
  admin = connectAdmin({ endpoint: product.base, token: credentials.adminToken });
  // v1 built for the 3 nearest with adaptive regions and published; v2 saved as a draft.
  await admin.ensureDataset(SLUG, NAME);
  const v1 = await admin.uploadSiteTable(SLUG, csvOf(tarnSites()));
  await admin.build(SLUG, v1.version, 'adaptive', 3);
  await admin.publish(SLUG, v1.version);
  await admin.uploadSiteTable(SLUG, csvOf(tarnSites(true)));
  browser = await launchBrowser();
  page = await browser.context.newPage();
  page.on('pageerror', (e) => pageErrors.push(e.message));
});

afterAll(async () => {
  await browser?.close();
  await product?.stop();
});

describe('versions screen: build options, one word per state, rename and delete', () => {
  it('starts the build form from the active version (adaptive, k = 3) and warns before a build lowers k', async () => {
    await page.goto(`${product.base}/console/`);
    await signInAs('tenantAdmin');
    await openDataset(SLUG);
    expect(await page.locator('#build-layout').inputValue()).toBe('adaptive');
    expect(await page.locator('#build-k').inputValue()).toBe('3');
    expect(await page.locator('#build-source').textContent()).toBe('As v1, the active version, was built: adaptive regions, k = 3.');
    expect(await page.locator('#build-warning').isVisible()).toBe(false);
    await shot('01-defaults-from-active');

    await page.getByLabel('Nearest sites an app may ask for (k, 1-8)').fill('1');
    await expect.poll(() => page.locator('#build-warning').textContent(), { timeout: 90_000 }).toBe(
      'v1, the active version, serves up to k = 3: once a version built for k = 1 is active, apps asking for 2 or 3 nearest sites get the error k_too_large.',
    );
    await page.getByRole('button', { name: 'Build v2' }).click();
    const ask = page.getByRole('dialog', { name: 'Build v2 for k = 1?' });
    await expect.poll(() => ask.textContent(), { timeout: 90_000 }).toContain('k_too_large');
    await shot('02-k-drop-warning');
    await ask.getByRole('button', { name: 'Cancel' }).click();
    await expect.poll(status, { timeout: 90_000 }).toMatch(/^Not built: v2 waits/);
    expect((await admin.version(SLUG, 2)).state).toBe('draft');
  });

  it('keeps the choice made by hand across screens and actions, and builds after the warning is confirmed', async () => {
    await page.locator('#build-layout').selectOption('grid');
    await page.getByLabel('Nearest sites an app may ask for (k, 1-8)').fill('2');
    await page.getByRole('button', { name: 'Site table', exact: true }).click();
    await page.getByRole('grid').waitFor({ timeout: 90_000 });
    await page.getByRole('button', { name: 'Versions', exact: true }).click();
    await expect.poll(status, { timeout: 90_000 }).toMatch(new RegExp(`^${SLUG}: 2 versions`));
    expect(await page.locator('#build-layout').inputValue()).toBe('grid');
    expect(await page.locator('#build-k').inputValue()).toBe('2');
    expect(await page.locator('#build-source').textContent()).toMatch(new RegExp(`^Your choice for ${SLUG} in this session`));

    await page.getByRole('button', { name: 'Build v2' }).click();
    await page.getByRole('dialog', { name: 'Build v2 for k = 2?' }).getByRole('button', { name: 'Build for k = 2 anyway' }).click();
    await expect.poll(status, { timeout: 120_000 }).toMatch(new RegExp(`^Built ${SLUG} v2`));
    await expect.poll(() => page.locator('tr[data-version="2"] .matrix').textContent(), { timeout: 90_000 }).toMatch(/^[\d,]+ × [\d,]+ · grid · k = 2$/);
    // Not reset by the build: the form still holds the choice.
    expect(await page.locator('#build-layout').inputValue()).toBe('grid');
    expect(await page.locator('#build-k').inputValue()).toBe('2');
    expect((await admin.version(SLUG, 2)).requestedLayout).toBe('grid');
    await shot('03-built-with-choice');
  });

  it('says "active" everywhere, and the dataset list follows a publish and a rollback at once', async () => {
    expect(await pickerText()).toBe(`${NAME} (${SLUG}) · v1 active`);
    await page.getByRole('button', { name: 'Publish v2' }).click();
    const ask = page.getByRole('dialog', { name: 'Publish v2, built for k = 2?' });
    await expect.poll(() => ask.textContent(), { timeout: 90_000 }).toContain('apps asking for 3 nearest sites get the error k_too_large');
    await ask.getByRole('button', { name: 'Publish v2 anyway' }).click();
    await expect.poll(status, { timeout: 90_000 }).toBe(`v2 of ${SLUG} is active (was v1)`);
    await expect.poll(pickerText, { timeout: 90_000 }).toBe(`${NAME} (${SLUG}) · v2 active`);
    expect(await page.locator('tr[data-version="1"] .matrix').textContent()).toMatch(/ · adaptive · k = 3$/);
    const text = await mainText();
    expect(text).not.toMatch(/\blive\b/i);
    expect(text).not.toMatch(/\bkd\b/);
    await shot('04-published-list-follows');

    await page.locator('#rollback-to').selectOption('1');
    await page.getByRole('button', { name: 'Roll back…' }).click();
    await expect.poll(() => page.getByRole('dialog').textContent(), { timeout: 90_000 }).toContain(`Roll back ${SLUG} from v2 (active now) to v1?`);
    await page.getByRole('dialog').getByRole('button', { name: 'Roll back to v1' }).click();
    await expect.poll(pickerText, { timeout: 90_000 }).toBe(`${NAME} (${SLUG}) · v1 active`);
    expect(await mainText()).not.toMatch(/\blive\b/i);
    for (const size of [{ width: 1280, height: 800 }, { width: 1024, height: 768 }]) {
      await page.setViewportSize(size);
      const width = await pageWidth();
      expect(width.document, `${size.width} x ${size.height}`).toBe(width.window);
    }
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  it('renames in a dialog that says the slug stays; a refused name is shown in place; apps keep the slug', async () => {
    await page.getByRole('button', { name: 'Rename…' }).click();
    const dialog = page.getByRole('dialog', { name: 'Rename dataset' });
    expect(await dialog.getByLabel('Name people see').inputValue()).toBe(NAME);
    expect(await dialog.locator('#rename-slug').textContent()).toBe(`The slug ${SLUG} stays as it is: apps use it in their URLs and API keys name it.`);
    await dialog.getByLabel('Name people see').fill('   ');
    await dialog.getByRole('button', { name: 'Rename' }).click();
    await expect.poll(() => dialog.locator('.status').textContent(), { timeout: 90_000 }).toMatch(/^name: /);
    await shot('05-rename-refused');
    await dialog.getByLabel('Name people see').fill('Tarn Reach landings (winter timetable)');
    await dialog.getByRole('button', { name: 'Rename' }).click();
    await expect.poll(status, { timeout: 90_000 }).toBe(`Renamed: ${SLUG} is now called “Tarn Reach landings (winter timetable)”. Its slug stays ${SLUG}.`);
    await expect.poll(pickerText, { timeout: 90_000 }).toBe(`Tarn Reach landings (winter timetable) (${SLUG}) · v1 active`);
    await shot('06-renamed');
    // An app asks by slug as before; geokdbush (npm) says which landing is nearest.
    const sites = tarnSites();
    const answer = await connect({ endpoint: product.base, apiKey: credentials.apiKey }).nearest(SLUG, { lat: -52.41, lon: -140.52 });
    const reference = geokdbushNearest(sites, -52.41, -140.52);
    expect(answer.results[0]!.id).toBe(reference.id);
    expect(Math.abs(answer.results[0]!.distanceMeters - greatCircleMeters(-52.41, -140.52, reference.lat, reference.lon))).toBeLessThan(3);
  });

  it('deletes only after the slug is typed, says what happens, and the dataset is gone for apps too', async () => {
    await page.getByRole('button', { name: 'Delete dataset…' }).click();
    const dialog = page.getByRole('dialog', { name: `Delete Tarn Reach landings (winter timetable) (${SLUG})?` });
    await expect.poll(() => dialog.locator('#delete-consequences').textContent(), { timeout: 90_000 }).toContain('Apps stop getting answers at once: v1 is active now');
    expect(await dialog.locator('#delete-consequences').textContent()).toContain('Its usage stays in the usage reports and statements.');
    const button = dialog.getByRole('button', { name: `Delete ${SLUG}` });
    expect(await button.isDisabled()).toBe(true);
    await dialog.getByLabel(`Type ${SLUG} to confirm`).fill('tarn');
    expect(await button.isDisabled()).toBe(true);
    await dialog.getByLabel(`Type ${SLUG} to confirm`).fill(SLUG);
    expect(await button.isDisabled()).toBe(false);
    await shot('07-delete-confirm');
    await button.click();
    await expect.poll(status, { timeout: 90_000 }).toMatch(new RegExp(`^Deleted Tarn Reach landings \\(winter timetable\\) \\(${SLUG}\\): it answers no queries now`));
    expect(await page.locator(`#versions-dataset option[value="${SLUG}"]`).count()).toBe(0);
    await shot('08-deleted');
    const manifest = await fetch(`${product.base}/v1/datasets/${SLUG}/manifest`, { headers: { authorization: `Bearer ${credentials.apiKey}` } });
    expect(manifest.status).toBe(404);
    expect(((await manifest.json()) as { error: { code: string } }).error.code).toBe('dataset_deleted');
    expect(pageErrors).toEqual([]);
  });

  it('offers editors rename but not delete', async () => {
    await admin.ensureDataset('tarn-buoys', 'Tarn Reach buoys');
    await page.getByRole('button', { name: 'Sign out' }).click();
    await signInAs('tenantEditor');
    await openDataset('tarn-buoys');
    expect(await page.getByRole('button', { name: 'Rename…' }).isVisible()).toBe(true);
    expect(await page.getByRole('button', { name: 'Delete dataset…' }).count()).toBe(0);
    await shot('09-editor');
    expect(pageErrors).toEqual([]);
  });
});

describe('CLI: nearveil dataset rename and delete (against the same server)', () => {
  const run = async (args: string[]) => {
    const lines: string[] = [];
    await datasetCommand([...args, '--endpoint', product.base, '--token', credentials.adminToken], (l) => lines.push(l));
    return lines.join('\n');
  };

  it('renames, refuses to delete an active dataset without --confirm, then deletes with it', async () => {
    await admin.ensureDataset('tarn-moorings', 'Tarn moorings');
    const up = await admin.uploadSiteTable('tarn-moorings', csvOf(tarnSites()));
    await admin.build('tarn-moorings', up.version);
    await admin.publish('tarn-moorings', up.version);
    expect(await run(['rename', '--dataset', 'tarn-moorings', '--name', 'Tarn Reach moorings'])).toBe('Renamed: tarn-moorings is now called "Tarn Reach moorings". Its slug stays tarn-moorings.');
    await expect(run(['delete', '--dataset', 'tarn-moorings'])).rejects.toThrow(
      'dataset "tarn-moorings" has an active version (v1) that apps may be using; to delete it anyway, run `nearveil dataset delete --dataset tarn-moorings --confirm tarn-moorings`',
    );
    await expect(run(['delete', '--dataset', 'tarn-moorings', '--confirm', 'tarn-mooring'])).rejects.toThrow(new CliError('--confirm: expected the slug of the dataset to delete, "tarn-moorings", got "tarn-mooring"'));
    expect(await run(['delete', '--dataset', 'tarn-moorings', '--confirm', 'tarn-moorings'])).toBe(
      'Deleted tarn-moorings ("Tarn Reach moorings"): it answers no queries from now on (v1 was active).\n' +
        "Its usage stays in reports and statements; the slug tarn-moorings is not given to another dataset; the server's sweep removes its stored files.",
    );
    expect((await admin.datasets()).map((d) => d.slug)).not.toContain('tarn-moorings');
  });

  it('names the mistake in usage errors', async () => {
    await expect(run(['remove', '--dataset', 'x'])).rejects.toThrow('dataset: expected `nearveil dataset rename` or `nearveil dataset delete`, got "remove"');
    await expect(run(['rename', '--dataset', 'tarn-buoys'])).rejects.toThrow('--name is required: the new name people should read, in quotes if it has spaces');
    await expect(run(['rename', '--dataset', 'Tarn Buoys', '--name', 'x'])).rejects.toThrow(/^--dataset: use 1-63 lowercase letters/);
    await expect(run(['rename', '--dataset', 'tarn-buoys', '--name', 'x', '--confirm', 'tarn-buoys'])).rejects.toThrow('dataset rename: --confirm does not apply here (it is for delete)');
    await expect(run(['delete', '--dataset', 'tarn-buoys', '--name', 'x'])).rejects.toThrow('dataset delete: --name does not apply here (it is for rename)');
    await expect(run(['rename', '--dataset', 'tarn-buoys', '--name', 'two\nlines'])).rejects.toMatchObject({ code: 'invalid_body', field: 'name' });
  });
});

describe('build options (pure)', () => {
  const version = (v: Partial<VersionInfo>) => ({ version: 3, maxK: 3, layout: 'adaptive', requestedLayout: 'auto', ...v }) as VersionInfo;

  it('defaults to what the active version asked for, else what it got, else automatic k = 1', () => {
    expect(defaultBuildChoice(undefined)).toEqual({ layout: 'auto', maxK: 1 });
    expect(defaultBuildChoice(version({}))).toEqual({ layout: 'auto', maxK: 3 });
    expect(defaultBuildChoice(version({ requestedLayout: null, layout: 'grid', maxK: 2 }))).toEqual({ layout: 'grid', maxK: 2 });
  });

  it('warns only when k drops below the active version’s', () => {
    expect(kDropWarning(3, version({}))).toBeNull();
    expect(kDropWarning(5, version({}))).toBeNull();
    expect(kDropWarning(1, undefined)).toBeNull();
    expect(kDropWarning(2, version({}))).toBe('v3, the active version, serves up to k = 3: once a version built for k = 2 is active, apps asking for 3 nearest sites get the error k_too_large.');
    expect(kDropWarning(1, version({ maxK: 5 }))).toMatch(/apps asking for 2 to 5 nearest sites get the error k_too_large\.$/);
  });

  it('keeps a choice per dataset and ignores what it cannot read back', () => {
    const saved = new Map<string, string>();
    const store = sessionChoiceStore({ getItem: (k) => saved.get(k) ?? null, setItem: (k, v) => void saved.set(k, v) });
    store.set('a', { layout: 'grid', maxK: 2 });
    expect(store.get('a')).toEqual({ layout: 'grid', maxK: 2 });
    expect(store.get('b')).toBeNull();
    saved.set('nearveil.build.c', '{"layout":"kd","maxK":2}');
    saved.set('nearveil.build.d', 'not json');
    expect([store.get('c'), store.get('d')]).toEqual([null, null]);
  });
});
