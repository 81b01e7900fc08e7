import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { get as httpGet, type IncomingHttpHeaders } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { harrowValeCsv } from '../../scripts/demo/harrow-vale.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';
import { installTarball } from './client-package-install.ts';
import { commandLines, readmeBlocks } from './readme-blocks.ts';

/**
 * The README's two commands as a newcomer runs them: `npm start` (here on a spare port with its
 * own state folder), then `npx nearveil query` and `npx nearveil import` in a second terminal.
 */
let product: ProductServer;
/** The client tarball `npm run pack:client` made, as the README's app developer section has it. */
let tarball = '';

function nearveil(args: string[]) {
  const run = spawnSync('npx', ['nearveil', ...args], { cwd: ROOT, env: product.env, encoding: 'utf8', timeout: 120_000 });
  return { code: run.status, stdout: run.stdout, stderr: run.stderr };
}

beforeAll(async () => {
  product = await startProduct('e2e');
});

/** GET on a connection of its own (no keep-alive pool): status, headers and body as text. */
function getOnNewConnection(url: string): Promise<{ status: number; headers: IncomingHttpHeaders; body: string }> {
  return new Promise((resolve, reject) => {
    httpGet(url, { agent: false }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => (body += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    }).on('error', reject);
  });
}

afterAll(async () => {
  await product?.stop();
});

describe('README commands', () => {
  it('starts on 127.0.0.1, answers /healthz and prints where the credentials are', async () => {
    expect((await fetch(`${product.base}/healthz`)).status).toBe(200);
    expect(product.log()).toContain(join(product.scratch, 'home', 'dev-credentials.json'));
  });

  it('writes the operator, tenant admin and editor sign-ins, and they sign in with the right roles', async () => {
    const saved = JSON.parse(readFileSync(join(product.scratch, 'home', 'dev-credentials.json'), 'utf8')) as {
      adminToken: string;
      users: Record<string, { email: string; password: string; role: string }>;
    };
    expect(saved.adminToken).toMatch(/^nva_/);
    expect(Object.values(saved.users).map((u) => u.role).sort()).toEqual(['operator', 'tenant_admin', 'tenant_editor']);
    const admin = saved.users.tenantAdmin!;
    const res = await fetch(`${product.base}/v1/session`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email: admin.email, password: admin.password }),
    });
    expect(res.status).toBe(200);
    expect(((await res.json()) as { user: { role: string; tenant: { slug: string } } }).user).toMatchObject({ role: 'tenant_admin', tenant: { slug: 'demo' } });
  });

  it('`nearveil query --json` returns the nearest demo site (geokdbush)', () => {
    const sites = parseSiteTable(harrowValeCsv()).sites;
    const index = new KDBush(sites.length);
    for (const s of sites) index.add(s.lon, s.lat);
    index.finish();
    // Points in town centres, between towns and outside the region.
    for (const [i, [lat, lon]] of ([[-75.93, 60.52], [-76.25, 59.42], [-75.25, 55.4], [-76.85, 63.47]] as const).entries()) {
      const run = nearveil(['query', '--dataset', 'harrow-vale-care', '--lat', String(lat), '--lon', String(lon), '--json']);
      expect(run.stderr + run.stdout).toMatch(/"results"/);
      const out = JSON.parse(run.stdout) as { results: Array<{ id: string; distanceMeters: number }>; cost: Record<string, number> & { keySetup?: Record<string, number> } };
      // The first run makes, proves and registers this machine's key; later runs (new processes) reuse it.
      if (i === 0) expect(out.cost.keySetup).toMatchObject({ proofBytes: 29_450 });
      else expect(out.cost.keySetup).toBeUndefined();
      delete out.cost.keySetup;
      // geokdbush (npm) as the outside reference for which site is nearest: the CLI reports its id.
      const reference = sites[around(index, lon, lat, 1)[0]!]!;
      expect(out.results[0]!.id, `${lat}, ${lon}`).toBe(reference.id);
      expect(Object.keys(out.cost).sort()).toEqual(['bytesDown', 'bytesUp', 'clientMs', 'columns', 'matrixOnes', 'modulusBits', 'rows', 'serverMs'].sort());
      expect(out.cost.modulusBits).toBe(2048);
    }
  });

  it('runs the README\'s "Two commands" as the product start does (npm start runs scripts/start.ts)', () => {
    const [block] = readmeBlocks('Two commands');
    expect(commandLines(block!.code)).toEqual(['npm ci && npm start', 'npm test']);
    expect(JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')).scripts.start).toMatch(/tsx scripts\/start\.ts$/);
  });

  it('runs the README\'s "Try it" block as written: a query with its cautions, an import for k = 3, a k = 3 query and a plan', () => {
    const [block] = readmeBlocks('Try it');
    const lines = commandLines(block!.code);
    expect(lines).toHaveLength(4);
    const outputs = lines.map((line) => {
      const run = spawnSync('bash', ['-c', line], { cwd: ROOT, env: product.env, encoding: 'utf8', timeout: 120_000 });
      expect(run.status, `${line}\n${run.stderr}`).toBe(0);
      return run.stdout;
    });
    // geokdbush (npm) names the nearest demo site to the README's point; the text answer must too.
    const sites = parseSiteTable(harrowValeCsv()).sites;
    const index = new KDBush(sites.length);
    for (const s of sites) index.add(s.lon, s.lat);
    index.finish();
    expect(outputs[0]).toContain(sites[around(index, 60.52, -75.93, 1)[0]!]!.id);
    expect(outputs[0]).toMatch(/Caution: Distances are straight-line/);
    expect(outputs[0]).not.toMatch(/^Warning:/);
    expect(outputs[1]).toMatch(/version 1 is now active/);
    const three = JSON.parse(outputs[2]!) as { version: number; results: Array<{ id: string }>; farFromCoverage: boolean; cautions: Array<{ code: string }> };
    const pharmacies = parseSiteTable(readFileSync(join(ROOT, 'demo/my-sites.csv'), 'utf8')).sites;
    const small = new KDBush(pharmacies.length);
    for (const s of pharmacies) small.add(s.lon, s.lat);
    small.finish();
    expect(three.results.map((r) => r.id)).toEqual(around(small, 60.52, -75.93, 3).map((i) => pharmacies[i as number]!.id));
    expect(three.farFromCoverage).toBe(false);
    expect(three.cautions.map((c) => c.code)).toEqual(['straight_line', 'may_be_out_of_date', 'emergency', 'network_privacy']);
    expect(outputs[3]).toMatch(/^Layout: /m);
  });

  it('flags a point on another continent as far from coverage, in the JSON and the text', () => {
    // Munich (48.14 N, 11.58 E, from memory) is some 13,000 km from the invented region.
    const json = nearveil(['query', '--dataset', 'harrow-vale-care', '--lat', '48.14', '--lon', '11.58', '--json']);
    expect(json.code, json.stderr).toBe(0);
    const out = JSON.parse(json.stdout) as { farFromCoverage: boolean; cautions: Array<{ code: string }>; results: Array<{ distanceMeters: number }> };
    expect(out.farFromCoverage).toBe(true);
    expect(out.cautions[0]!.code).toBe('far_from_coverage');
    expect(out.results[0]!.distanceMeters).toBeGreaterThan(10_000_000);
    const text = nearveil(['query', '--dataset', 'harrow-vale-care', '--lat', '48.14', '--lon', '11.58']);
    expect(text.stdout).toMatch(/^Warning: This point is far outside the area these sites cover/);
  });

  it('runs the README\'s "For app developers" commands as written: the client tarball, a browser key, the finder page', async () => {
    const lines = commandLines(readmeBlocks('For app developers')[0]!.code);
    expect(lines[0]).toBe('npm run pack:client');
    const packed = spawnSync('npm', ['run', '--silent', 'pack:client'], { cwd: ROOT, encoding: 'utf8', timeout: 300_000 });
    expect(packed.status, packed.stderr).toBe(0);
    tarball = join(ROOT, 'packages', 'client', packed.stdout.trim().split('\n').at(-1)!);
    expect(tarball).toMatch(/nearveil-client-\d+\.\d+\.\d+\.tgz$/);
    const made = lines.slice(1).map((line) => {
      const args = line.replace(/^npx nearveil /, '').match(/"[^"]*"|\S+/g)!.map((a) => a.replace(/^"|"$/g, ''));
      const run = nearveil([...args, '--json']);
      expect(run.code, run.stderr).toBe(0);
      return JSON.parse(run.stdout) as Record<string, unknown>;
    });
    const [key, finder] = [made[0]!, made[1]!];
    expect(key).toMatchObject({ kind: 'browser', origins: ['https://care-finder.example'], datasets: ['harrow-vale-care'], requestsPerMinute: 30 });
    expect(finder).toMatchObject({ enabled: true, frameOrigins: ['https://care-finder.example'] });
    // On a connection of its own: after the commands above, fetch failed here with "other side
    // closed" while the Worker's log showed no such request (a kept-alive socket, we think).
    const page = await getOnNewConnection(finder.url as string);
    expect(page.status).toBe(200);
    expect(page.headers['content-security-policy']).toContain("frame-ancestors 'self' https://care-finder.example");
    expect(page.body).toContain('Find the nearest');
    // The key works from its origin and nowhere else (as a browser would send Origin).
    const asPage = (origin: string) => fetch(`${product.base}/v1/datasets/harrow-vale-care/manifest`, { headers: { authorization: `Bearer ${key.secret}`, origin } });
    expect((await asPage('https://care-finder.example')).status).toBe(200);
    expect((await asPage('https://elsewhere.example')).status).toBe(403);
  });

  it('runs the README\'s "From code" sample as written, in an app with the packed client installed', () => {
    const [sample] = readmeBlocks('From code');
    expect(sample!.lang).toBe('ts');
    expect(tarball, 'the "For app developers" test packs the client first').not.toBe('');
    const scratch = mkdtempSync(join(tmpdir(), 'nearveil-readme-app-'));
    const project = installTarball(tarball, scratch);
    const file = join(project, 'sample.ts');
    writeFileSync(file, sample!.code);
    try {
      const saved = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { apiKey: string };
      const run = spawnSync(process.execPath, [join(ROOT, 'node_modules/tsx/dist/cli.mjs'), file], {
        cwd: project,
        env: { ...product.env, NEARVEIL_ENDPOINT: product.base, NEARVEIL_API_KEY: saved.apiKey },
        encoding: 'utf8',
        timeout: 120_000,
      });
      expect(run.status, run.stderr).toBe(0);
      const sites = parseSiteTable(harrowValeCsv()).sites;
      const index = new KDBush(sites.length);
      for (const s of sites) index.add(s.lon, s.lat);
      index.finish();
      const nearest = sites[around(index, 60.52, -75.93, 1)[0]!]!;
      const lines = run.stdout.split('\n');
      expect(lines[0]).toMatch(new RegExp(`^${nearest.id} \\d+ m in a straight line$`));
      expect(lines.filter((l) => l.startsWith('Caution: '))).toHaveLength(4);
      expect(run.stdout).not.toContain('far from every listed site');
      expect(lines.find((l) => /^HV-\d{4}, HV-\d{4}, HV-\d{4}$/.test(l))).toBeDefined();
      expect(run.stdout).toContain(`id: '${nearest.id}'`);
      expect(run.stdout).toMatch(/phone: '\+999 4021 01\d\d'/);
    } finally {
      rmSync(scratch, { recursive: true, force: true });
    }
  });

  it('`nearveil versions`, `publish` and `rollback` switch the active version of the imported dataset', () => {
    const again = nearveil(['import', 'demo/my-sites.csv', '--dataset', 'pharmacies', '--publish', '--json']);
    expect(again.code, again.stderr).toBe(0);
    expect(JSON.parse(again.stdout)).toMatchObject({ version: 2, state: 'active' });
    const rolled = nearveil(['rollback', '--dataset', 'pharmacies']);
    expect(rolled.code, rolled.stderr).toBe(0);
    expect(rolled.stdout).toMatch(/version 1 of pharmacies is active again \(was 2\)/);
    const list = nearveil(['versions', '--dataset', 'pharmacies', '--json']);
    expect(list.code, list.stderr).toBe(0);
    const versions = JSON.parse(list.stdout) as { activeVersion: number; versions: Array<{ version: number; state: string; servedUntil: string | null }> };
    expect(versions.activeVersion).toBe(1);
    expect(versions.versions.map((v) => [v.version, v.state])).toEqual([[2, 'ready'], [1, 'active']]);
    expect(Date.parse(versions.versions[0]!.servedUntil!)).toBeGreaterThan(Date.now());
    const listed = nearveil(['versions', '--dataset', 'pharmacies']);
    expect(listed.stdout).toMatch(/v2 {2}ready, still answering until .* by dev admin token/);
    const published = nearveil(['publish', '--dataset', 'pharmacies', '--version', '2', '--json']);
    expect(published.code, published.stderr).toBe(0);
    expect(JSON.parse(published.stdout)).toMatchObject({ activeVersion: 2, previousVersion: 1 });
    const query = nearveil(['query', '--dataset', 'pharmacies', '--lat', '-75.95', '--lon', '60.29', '--json']);
    expect(JSON.parse(query.stdout).version).toBe(2);
  });

  it('`nearveil usage --json` prints the month\'s totals, counting the queries above', () => {
    const run = nearveil(['usage', '--json']);
    expect(run.code, run.stderr).toBe(0);
    const usage = JSON.parse(run.stdout) as { month: string; queries: number; bytesIn: number; totals: { queries: number } } & Record<string, unknown>;
    expect(usage.month).toBe(new Date().toISOString().slice(0, 7));
    // Four demo queries and one on the imported dataset, above; each moved bytes and cost products.
    expect(usage.queries).toBeGreaterThanOrEqual(5);
    for (const k of ['rejected', 'bytesIn', 'bytesOut', 'multiplications']) expect(typeof usage[k]).toBe('number');
    expect(usage.bytesIn).toBeGreaterThan(usage.queries * 256);
    expect(usage.totals.queries).toBe(usage.queries);
  });

  it('`nearveil usage --email` signs the operator in to read any tenant\'s usage', () => {
    const credentials = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { users: Record<string, { email: string; password: string }> };
    const operator = credentials.users.operator!;
    const asTenant = JSON.parse(nearveil(['usage', '--json']).stdout) as { queries: number };
    const run = spawnSync('npx', ['nearveil', 'usage', '--email', operator.email, '--tenant', 'demo', '--json'], { cwd: ROOT, env: { ...product.env, NEARVEIL_PASSWORD: operator.password }, encoding: 'utf8', timeout: 120_000 });
    expect(run.status, run.stderr).toBe(0);
    const usage = JSON.parse(run.stdout) as { tenant: string; queries: number };
    expect(usage.tenant).toBe('demo');
    expect(usage.queries).toBe(asTenant.queries);
    const wrong = spawnSync('npx', ['nearveil', 'usage', '--email', operator.email, '--tenant', 'demo'], { cwd: ROOT, env: { ...product.env, NEARVEIL_PASSWORD: 'not the password' }, encoding: 'utf8', timeout: 120_000 });
    expect(wrong.status).not.toBe(0);
    expect(wrong.stderr).toMatch(/the email or the password is wrong/);
  });

  it('`nearveil query --details` prints the stored record of the nearest demo site, every column', () => {
    const table = parseSiteTable(harrowValeCsv());
    const run = nearveil(['query', '--dataset', 'harrow-vale-care', '--lat', '-75.93', '--lon', '60.52', '--details', '--json']);
    expect(run.code, run.stderr).toBe(0);
    const out = JSON.parse(run.stdout) as { results: Array<{ id: string; name: string; record: unknown }>; cost: { details: { queries: number; sealedBytes: number } } };
    const stored = table.sites.find((s) => s.id === out.results[0]!.id)!;
    expect(out.results[0]!.record).toEqual(stored);
    expect(out.results[0]!.name).toBe(stored.name);
    expect(out.cost.details.queries).toBe(1);
    // The sealed file is kept in the client's home: a second run downloads nothing.
    const again = nearveil(['query', '--dataset', 'harrow-vale-care', '--lat', '-76.25', '--lon', '59.42', '--details']);
    expect(again.code, again.stderr).toBe(0);
    expect(again.stdout).toMatch(/phone: "\+999 4021 01\d\d"/);
    expect(again.stdout).toMatch(/sealed file kept from before/);
  });

  it('gives clear messages for bad input', () => {
    const lat = nearveil(['query', '--dataset', 'harrow-vale-care', '--lat', '123', '--lon', '0']);
    expect(lat.code).toBe(2);
    expect(lat.stderr).toMatch(/--lat: expected decimal degrees between -90 and 90, got "123"/);
    const missing = nearveil(['import', 'no-such-file.csv', '--dataset', 'pharmacies']);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/cannot read no-such-file.csv/);
    const unknown = nearveil(['query', '--dataset', 'no-such-set', '--lat', '45', '--lon', '-111']);
    expect(unknown.code).toBe(1);
    expect(unknown.stderr).toMatch(/dataset "no-such-set" does not exist.*HTTP 404/);
    expect(unknown.stderr).toMatch(/datasets of this tenant: .*harrow-vale-care/);
    const typo = nearveil(['query', '--dataset', 'harrow-vale-car', '--lat', '-75.93', '--lon', '60.52']);
    expect(typo.stderr).toMatch(/did you mean "harrow-vale-care"\?/);
  });
});
