import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { harrowValeCsv } from '../../scripts/demo/harrow-vale.ts';
import { ROOT, startProduct, type ProductServer } from '../product-server.ts';

/**
 * The README's two commands as a newcomer runs them: `npm start` (here on a spare port with its
 * own state folder), then `npx nearveil query` and `npx nearveil import` in a second terminal.
 */
let product: ProductServer;

function nearveil(args: string[]) {
  const run = spawnSync('npx', ['nearveil', ...args], { cwd: ROOT, env: product.env, encoding: 'utf8', timeout: 120_000 });
  return { code: run.status, stdout: run.stdout, stderr: run.stderr };
}

beforeAll(async () => {
  product = await startProduct('e2e');
});

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

  it('`nearveil import FILE --dataset pharmacies --max-k 3 --publish` makes a new dataset answerable, for the three nearest too', () => {
    const imported = nearveil(['import', 'demo/my-sites.csv', '--dataset', 'pharmacies', '--max-k', '3', '--publish']);
    expect(imported.code, imported.stderr).toBe(0);
    expect(imported.stdout).toMatch(/version 1 is now active/);
    const run = nearveil(['query', '--dataset', 'pharmacies', '--lat', '-75.95', '--lon', '60.29', '--json']);
    expect(run.code, run.stderr).toBe(0);
    expect(JSON.parse(run.stdout).version).toBe(1);
    // The README's code sample asks this dataset for k = 3 at -75.93, 60.52.
    const three = nearveil(['query', '--dataset', 'pharmacies', '--lat', '-75.93', '--lon', '60.52', '--k', '3', '--json']);
    expect(three.code, three.stderr).toBe(0);
    expect(JSON.parse(three.stdout).results).toHaveLength(3);
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
