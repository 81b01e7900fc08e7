import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { harrowValeCsv } from '../../scripts/demo/harrow-vale.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { launchBrowser } from '../console/browser.ts';
import { geokdbushNearest } from '../geokdbush-nearest.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { buildPackAndInstall, type InstalledClientPackage } from './client-package-install.ts';
import { bundleTrialPage, serveFolder } from './client-package-page.ts';

/**
 * The client as an app developer gets it (issue 16, parts 1 and 2): built, packed, installed
 * from the tarball into a fresh project, then used from Node and from a vite bundle in headless
 * Chromium against the product (`npm start` on a spare port with the demo dataset). The nearest
 * site must be geokdbush's (npm, the outside reference) and the CLI's; in the browser the key
 * lives in IndexedDB: made and registered once, reused after a reload, gone after forgetKey().
 */
const DATASET = 'harrow-vale-care';
const OUT = join(ROOT, 'test-results', 'client-package');
const SITES = parseSiteTable(harrowValeCsv()).sites;

// Town centres of the invented region (scripts/demo/harrow-vale.ts), a point between towns, one
// some 400 km outside, and seeded random points in the box around the towns.
const random = seededRandom(1616);
const POINTS: Array<[number, number]> = [
  [-75.93, 60.52],
  [-76.07, 58.99],
  [-76.25, 59.42],
  [-72.5, 50.0],
  ...Array.from({ length: 3 }, (): [number, number] => [-76.5 + random() * 1.0, 57.3 + random() * 5.2]),
];

let product: ProductServer;
let installed: InstalledClientPackage;
let credentials: { apiKey: string; adminToken: string };
/** The browser key the trial page uses (made for its origin in the Chromium test). */
let pageKey = '';

function nearveilCli(command: string, cwd: string, lat: number, lon: number): string {
  const run = spawnSync(command === 'npx' ? 'npx' : command, [...(command === 'npx' ? ['nearveil'] : []), 'query', '--dataset', DATASET, '--lat', String(lat), '--lon', String(lon), '--json'], {
    cwd,
    env: product.env,
    encoding: 'utf8',
    timeout: 120_000,
  });
  if (run.status !== 0) throw new Error(`${command} query failed: ${run.stderr}${run.stdout}`);
  return (JSON.parse(run.stdout) as { results: Array<{ id: string }> }).results[0]!.id;
}

beforeAll(async () => {
  mkdirSync(OUT, { recursive: true });
  product = await startProduct('client-package');
  credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as typeof credentials;
  installed = buildPackAndInstall();
}, 420_000);

afterAll(async () => {
  await product?.stop();
  installed?.remove();
});

describe('the client package', () => {
  it('packs the built entries, declarations, CLI and README, and maps ".", "./admin" and the bin', () => {
    const files = installed.packedFiles;
    for (const file of ['package.json', 'README.md', 'dist/index.js', 'dist/admin.js', 'dist/cli/nearveil.js', 'dist/types/sdk/browser.d.ts', 'dist/types/sdk/admin.d.ts', 'dist/THIRD-PARTY-NOTICES.txt']) {
      expect(files, file).toContain(file);
    }
    // Built files only: no TypeScript sources, no tests, nothing from the checkout besides dist/.
    expect(files.filter((f) => f.endsWith('.ts') && !f.endsWith('.d.ts'))).toEqual([]);
    expect(files.filter((f) => f !== 'package.json' && f !== 'README.md' && !f.startsWith('dist/'))).toEqual([]);
    const pkg = JSON.parse(readFileSync(join(installed.project, 'node_modules', '@nearveil', 'client', 'package.json'), 'utf8')) as Record<string, unknown>;
    expect(pkg).toMatchObject({
      name: '@nearveil/client',
      type: 'module',
      sideEffects: false,
      bin: { nearveil: 'dist/cli/nearveil.js' },
      exports: { '.': { types: './dist/types/sdk/browser.d.ts', default: './dist/index.js' }, './admin': { types: './dist/types/sdk/admin.d.ts', default: './dist/admin.js' } },
    });
    // The package's own dependencies, as the checkout pins them; everything else is bundled.
    const root = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { dependencies: Record<string, string> };
    expect(pkg.dependencies).toEqual({ zod: root.dependencies.zod, '@noble/hashes': root.dependencies['@noble/hashes'] });
    // Declarations import ".js" paths, which every TypeScript and declaration tool resolves (tsc writes the sources' ".ts").
    const declarations = installed.packedFiles.filter((f) => f.endsWith('.d.ts'));
    const tsSpecifiers = declarations.filter((f) => /(from|import)\s*\(?\s*'\.{1,2}\/[^']+\.ts'/.test(readFileSync(join(installed.project, 'node_modules', '@nearveil', 'client', f), 'utf8')));
    expect(declarations.length).toBeGreaterThan(10);
    expect(tsSpecifiers).toEqual([]);
    // The README's code imports the package by name.
    expect(readFileSync(join(installed.project, 'node_modules', '@nearveil', 'client', 'README.md'), 'utf8')).toMatch(/from '@nearveil\/client'/);
  });

  it('type-checks a fresh TypeScript project (nodenext) against the installed declarations', () => {
    writeFileSync(
      join(installed.project, 'check.ts'),
      [
        "import { connect, indexedDbKeyStore, CAUTIONS, type NearestResult } from '@nearveil/client';",
        "import { connectAdmin } from '@nearveil/client/admin';",
        "const client = connect({ endpoint: 'http://127.0.0.1:1', apiKey: 'k', keyStore: indexedDbKeyStore() });",
        "export const pending: Promise<NearestResult> = client.nearest('d', { lat: 1, lon: 2 }, { k: 2 });",
        'export const firstId = pending.then((r) => r.results[0]?.id.toUpperCase());',
        'export const codes = CAUTIONS.map((c) => c.code);',
        '// @ts-expect-error k is a number: the declarations carry the option types, not any',
        "void client.nearest('d', { lat: 1, lon: 2 }, { k: 'two' });",
        "export const admin = connectAdmin({ endpoint: 'http://127.0.0.1:1', token: 'nva_x' }).versions('d');",
        '',
      ].join('\n'),
    );
    writeFileSync(
      join(installed.project, 'tsconfig.json'),
      JSON.stringify({ compilerOptions: { target: 'ES2022', module: 'NodeNext', moduleResolution: 'NodeNext', lib: ['ES2022', 'DOM'], strict: true, noEmit: true, types: [], skipLibCheck: false }, files: ['check.ts'] }),
    );
    const tsc = spawnSync(process.execPath, [join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', 'tsconfig.json'], { cwd: installed.project, encoding: 'utf8' });
    expect(tsc.stdout + tsc.stderr).toBe('');
    expect(tsc.status).toBe(0);
  });

  it('from Node: the installed package finds the nearest site geokdbush finds, as `npx nearveil query` and the packed bin do', () => {
    writeFileSync(
      join(installed.project, 'node-trial.mjs'),
      `import { connect, indexedDbKeyStore } from '@nearveil/client';
import { connectAdmin } from '@nearveil/client/admin';
const { NV_ENDPOINT, NV_API_KEY, NV_ADMIN_TOKEN, NV_DATASET, NV_POINTS } = process.env;
const client = connect({ endpoint: NV_ENDPOINT, apiKey: NV_API_KEY });
const answers = [];
for (const [lat, lon] of JSON.parse(NV_POINTS)) {
  const r = await client.nearest(NV_DATASET, { lat, lon });
  answers.push({ id: r.results[0].id, keySetup: r.cost.keySetup !== undefined, cautions: r.cautions.map((c) => c.code) });
}
let storeError = null;
try { indexedDbKeyStore(); } catch (err) { storeError = err.message; }
const { activeVersion } = await connectAdmin({ endpoint: NV_ENDPOINT, token: NV_ADMIN_TOKEN }).versions(NV_DATASET);
console.log(JSON.stringify({ answers, storeError, activeVersion }));
`,
    );
    // Plain node, no tsx and no loader: the package is JavaScript as published.
    const run = spawnSync(process.execPath, ['node-trial.mjs'], {
      cwd: installed.project,
      encoding: 'utf8',
      timeout: 180_000,
      env: { ...process.env, NV_ENDPOINT: product.base, NV_API_KEY: credentials.apiKey, NV_ADMIN_TOKEN: credentials.adminToken, NV_DATASET: DATASET, NV_POINTS: JSON.stringify(POINTS) },
    });
    expect(run.stderr).toBe('');
    const out = JSON.parse(run.stdout) as { answers: Array<{ id: string; keySetup: boolean; cautions: string[] }>; storeError: string | null; activeVersion: number };
    expect(out.activeVersion).toBe(1);
    // One client object: its (memory-kept) key is made and registered for the first query only.
    expect(out.answers.map((a) => a.keySetup)).toEqual(POINTS.map((_, i) => i === 0));
    for (const [i, [lat, lon]] of POINTS.entries()) {
      // geokdbush (npm) is the outside reference for which site is nearest.
      const reference = geokdbushNearest(SITES, lat, lon).id;
      expect(out.answers[i]!.id, `package from Node at ${lat}, ${lon}`).toBe(reference);
      expect(nearveilCli('npx', ROOT, lat, lon), `npx nearveil query at ${lat}, ${lon}`).toBe(reference);
      expect(nearveilCli(join(installed.project, 'node_modules', '.bin', 'nearveil'), installed.project, lat, lon), `packed bin at ${lat}, ${lon}`).toBe(reference);
    }
    // The point far outside the region carries the far-from-coverage caution first.
    expect(out.answers[3]!.cautions[0]).toBe('far_from_coverage');
    expect(out.storeError).toMatch(/no IndexedDB.*memoryKeyStore/);
  });

  it('in Chromium: a vite bundle of the package queries the product, keeps its key in IndexedDB across a reload and drops it on forgetKey()', async () => {
    const page = await bundleTrialPage(installed.project);
    const code = page.scripts.join('\n');
    // The build's own measure (connect and the IndexedDB store alone) and this page's (the same plus the page's code).
    const buildSize = installed.buildLog.split('\n').find((line) => line.includes('min+gzip'));
    expect(buildSize).toMatch(/\d+\.\d KB min\+gzip/);
    const figures: Record<string, unknown> = { buildSize, pageBundleMinBytes: Buffer.byteLength(code), pageBundleGzipBytes: gzipSync(code).length };
    const site = await serveFolder(page.outDir);
    // A page carries a browser key bound to its origin, made here as a provider would: `nearveil key create --browser`.
    const made = spawnSync(process.execPath, [join(ROOT, 'sdk/cli/bin.mjs'), 'key', 'create', '--browser', '--origin', site.origin, '--label', 'trial page', '--json'], { env: product.env, encoding: 'utf8', timeout: 120_000 });
    expect(made.status, made.stderr).toBe(0);
    const browserKey = (JSON.parse(made.stdout) as { kind: string; secret: string; origins: string[] });
    expect(browserKey).toMatchObject({ kind: 'browser', origins: [site.origin] });
    pageKey = browserKey.secret;
    const browser = await launchBrowser();
    try {
      const tab = await browser.context.newPage();
      const registrations: string[] = [];
      tab.on('request', (r) => {
        if (r.method() === 'POST' && new URL(r.url()).pathname === '/v1/moduli') registrations.push(r.url());
      });
      // The page's origin is not the product's: the requests go cross-origin (the Worker answers CORS).
      expect(new URL(site.origin).port).not.toBe(String(product.port));
      await tab.goto(site.origin + '/');
      await tab.waitForFunction(() => 'trial' in globalThis);

      const first = await nearestIn(tab, POINTS[0]!);
      expect(first.results[0]!.id).toBe(geokdbushNearest(SITES, ...POINTS[0]!).id);
      expect(first.cost.keySetup).toMatchObject({ generateMs: expect.any(Number), proveMs: expect.any(Number), registerMs: expect.any(Number), proofBytes: 29_450 });
      expect(registrations).toHaveLength(1);
      const modulus = await storedModulus(tab);
      expect(modulus).toMatch(/^[0-9a-f]{512}$/);
      await tab.screenshot({ path: join(OUT, 'first-visit.png'), fullPage: true });
      figures.firstVisit = { keySetup: first.cost.keySetup, ...queryFigures(first) };

      // A later visit: the same key from IndexedDB, no new proof, no second registration.
      await tab.reload();
      await tab.waitForFunction(() => 'trial' in globalThis);
      const again = await nearestIn(tab, POINTS[2]!);
      expect(again.results[0]!.id).toBe(geokdbushNearest(SITES, ...POINTS[2]!).id);
      expect(again.cost.keySetup).toBeUndefined();
      expect(registrations).toHaveLength(1);
      expect(await storedModulus(tab)).toBe(modulus);
      await tab.screenshot({ path: join(OUT, 'after-reload.png'), fullPage: true });
      figures.afterReload = queryFigures(again);

      // forgetKey(): the record is gone, and the next query makes, proves and registers a new key.
      await tab.evaluate(([endpoint, apiKey]) => (globalThis as unknown as TrialWindow).trial.forget(endpoint, apiKey), [product.base, browserKey.secret] as const);
      expect(await storedModulus(tab)).toBeNull();
      const fresh = await nearestIn(tab, POINTS[4]!);
      expect(fresh.results[0]!.id).toBe(geokdbushNearest(SITES, ...POINTS[4]!).id);
      expect(fresh.cost.keySetup).toMatchObject({ generateMs: expect.any(Number), registerMs: expect.any(Number) });
      expect(registrations).toHaveLength(2);
      const newModulus = await storedModulus(tab);
      expect(newModulus).toMatch(/^[0-9a-f]{512}$/);
      expect(newModulus).not.toBe(modulus);
      figures.afterForget = { keySetup: fresh.cost.keySetup };

      // A damaged record is refused with a warning and replaced, never used.
      await damageStoredKey(tab);
      await tab.reload();
      await tab.waitForFunction(() => 'trial' in globalThis);
      const repaired = await nearestIn(tab, POINTS[5]!);
      expect(repaired.results[0]!.id).toBe(geokdbushNearest(SITES, ...POINTS[5]!).id);
      expect(repaired.cost.keySetup).toBeDefined();
      expect(await tab.evaluate(() => (globalThis as unknown as TrialWindow).trial.warnings)).toEqual([expect.stringMatching(/client key in IndexedDB "nearveil-client-keys" is refused \(keyPairFromJson: expected n = p\*q/)]);
      expect(await storedModulus(tab)).toMatch(/^[0-9a-f]{512}$/);
      expect(registrations).toHaveLength(3);
    } finally {
      writeFileSync(join(OUT, 'figures.json'), JSON.stringify(figures, null, 2) + '\n');
      console.log('client package figures:', JSON.stringify(figures));
      await browser.close();
      await site.close();
    }
  });
});

interface TrialResult {
  results: Array<{ id: string; distanceMeters: number }>;
  cost: { bytesUp: number; bytesDown: number; clientMs: number; serverMs: number | null; keySetup?: Record<string, number> };
  wallMs: number;
}
interface TrialWindow {
  trial: { nearest(endpoint: string, apiKey: string, dataset: string, point: { lat: number; lon: number }): Promise<TrialResult>; forget(endpoint: string, apiKey: string): Promise<void>; warnings: string[] };
}

function nearestIn(tab: Page, [lat, lon]: [number, number]): Promise<TrialResult> {
  return tab.evaluate(
    ([endpoint, apiKey, dataset, lat, lon]) => (globalThis as unknown as TrialWindow).trial.nearest(endpoint, apiKey, dataset, { lat, lon }),
    [product.base, pageKey, DATASET, lat, lon] as const,
  );
}

function queryFigures(r: TrialResult) {
  return { bytesUp: r.cost.bytesUp, bytesDown: r.cost.bytesDown, clientMs: r.cost.clientMs, serverMs: r.cost.serverMs, wallMs: r.wallMs };
}

/** The modulus of the 2048-bit key the page keeps in IndexedDB (hex), or null when there is none; read past the client. */
function storedModulus(tab: Page): Promise<string | null> {
  return tab.evaluate(
    () =>
      new Promise<string | null>((resolve, reject) => {
        const open = indexedDB.open('nearveil-client-keys');
        open.onerror = () => reject(open.error);
        open.onsuccess = () => {
          const db = open.result;
          const get = db.transaction('client-keys').objectStore('client-keys').get(2048);
          get.onsuccess = () => {
            db.close();
            resolve((get.result as { key?: { n?: string } } | undefined)?.key?.n ?? null);
          };
          get.onerror = () => reject(get.error);
        };
      }),
  );
}

/** Changes one hex digit of the stored n, as a damaged or tampered record would read. */
function damageStoredKey(tab: Page): Promise<void> {
  return tab.evaluate(
    () =>
      new Promise<void>((resolve, reject) => {
        const open = indexedDB.open('nearveil-client-keys');
        open.onsuccess = () => {
          const tx = open.result.transaction('client-keys', 'readwrite');
          const store = tx.objectStore('client-keys');
          const get = store.get(2048);
          get.onsuccess = () => {
            const record = get.result as { key: { n: string } };
            record.key.n = (record.key.n[0] === 'f' ? 'e' : 'f') + record.key.n.slice(1);
            store.put(record, 2048);
          };
          tx.oncomplete = () => {
            open.result.close();
            resolve();
          };
          tx.onerror = () => reject(tx.error);
        };
        open.onerror = () => reject(open.error);
      }),
  );
}
