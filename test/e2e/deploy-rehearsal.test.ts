import { spawnSync, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { around } from 'geokdbush';
import KDBush from 'kdbush';
import { afterAll, describe, expect, it } from 'vitest';
import { startWranglerDev, stopWranglerDev } from '../../scripts/dev/wrangler.ts';
import { connectAdmin } from '../../sdk/admin.ts';
import { connect } from '../../sdk/client.ts';
import { send } from '../../sdk/http.ts';
import { signIn } from '../../sdk/session.ts';
import { freePort, ROOT } from '../product-server.ts';

/**
 * The README's "Operating nearveil" steps, rehearsed from an empty local state with no demo
 * seeding (no deploy is possible from here, so --local stands in for --remote): migrations,
 * the first operator, a tenant and its admin, a dataset imported and published, an API key, a
 * private query, usage; then the bundle `wrangler deploy` would upload, checked.
 */
const QUIET = { ...process.env, WRANGLER_SEND_METRICS: 'false', CLOUDFLARE_CF_FETCH_ENABLED: 'false', NO_COLOR: '1' };
const scratch = mkdtempSync(join(tmpdir(), 'nearveil-rehearsal-'));
const state = join(scratch, 'state');
let dev: ChildProcess | undefined;
afterAll(async () => {
  if (dev) await stopWranglerDev(dev);
  rmSync(scratch, { recursive: true, force: true });
});

function runNode(args: string[], env: NodeJS.ProcessEnv = QUIET) {
  const run = spawnSync(process.execPath, args, { cwd: ROOT, env, encoding: 'utf8', timeout: 240_000 });
  expect(run.status, `${args.slice(0, 4).join(' ')}:\n${run.stdout}\n${run.stderr}`).toBe(0);
  return run.stdout;
}

// Invented sites along an invented coast (demo data).
const SITES = Array.from({ length: 60 }, (_, i) => ({ id: `cove-${i}`, lat: 44 + (i % 10) * 0.05, lon: 7 + Math.floor(i / 10) * 0.07 }));

describe('deploy rehearsal: the README operating steps on an empty local state', () => {
  it('migrates, makes the first operator, a tenant, its admin, a published dataset and a key, answers a private query and counts it', async () => {
    runNode(['node_modules/wrangler/bin/wrangler.js', 'd1', 'migrations', 'apply', 'DB', '--local', '--persist-to', state]);
    const operator = { email: 'operator@rehearsal.invalid', password: 'an operator password for the rehearsal' };
    const made = runNode(['sdk/cli/bin.mjs', 'operator', 'init', '--local', '--persist-to', state, '--email', operator.email], { ...QUIET, NEARVEIL_OPERATOR_PASSWORD: operator.password });
    expect(made).toMatch(/Operator operator@rehearsal\.invalid created/);

    const port = await freePort();
    const endpoint = `http://127.0.0.1:${port}`;
    dev = startWranglerDev(['--ip', '127.0.0.1', '--port', String(port), '--persist-to', state, '--show-interactive-dev-session=false', '--inspector-port', String(await freePort())], {
      WRANGLER_REGISTRY_PATH: join(state, 'dev-registry'),
    });
    for (let until = Date.now() + 120_000; ; await new Promise((r) => setTimeout(r, 300))) {
      if (Date.now() > until) throw new Error('wrangler dev did not answer /healthz');
      if (await fetch(`${endpoint}/healthz`).then((r) => r.ok, () => false)) break;
    }

    const asOperator = await signIn(endpoint, operator.email, operator.password);
    const admin = { email: 'admin@coast-clinics.invalid', password: 'a tenant admin password, long' };
    const tenant = await send({ endpoint, secret: '', session: asOperator }, 'POST', 'v1/operator/tenants', JSON.stringify({ slug: 'coast-clinics', name: 'Coast clinics (invented)', admin }), 'application/json');
    expect(tenant.status).toBe(201);

    const asAdmin = connectAdmin({ endpoint, session: await signIn(endpoint, admin.email, admin.password) });
    await asAdmin.ensureDataset('clinics', 'Clinics on an invented coast');
    const uploaded = await asAdmin.uploadSiteTable('clinics', ['id,lat,lon', ...SITES.map((s) => `${s.id},${s.lat},${s.lon}`)].join('\n'));
    await asAdmin.build('clinics', uploaded.version);
    await asAdmin.publish('clinics', uploaded.version);
    const key = await asAdmin.createApiKey({ label: 'rehearsal app', datasets: ['clinics'], monthlyQuota: 10 });

    const point = { lat: 44.21, lon: 7.16 };
    const found = await connect({ endpoint, apiKey: key.secret }).nearest('clinics', point);
    // geokdbush (npm) as the outside reference: the great-circle nearest of the 60 sites.
    const index = new KDBush(SITES.length);
    for (const s of SITES) index.add(s.lon, s.lat);
    index.finish();
    expect(found.results[0]!.id).toBe(SITES[around(index, point.lon, point.lat, 1)[0]!]!.id);

    const usage = await asAdmin.usage({ dataset: 'clinics' });
    expect(usage.totals.queries).toBe(1);
    expect(usage.totals.multiplications).toBeGreaterThan(0);
  });

  it('bundles for deploy: every binding present, under 3 MB gzipped, no Node-only module reached from the Worker', () => {
    const outdir = join(scratch, 'bundle');
    const printed = runNode(['node_modules/wrangler/bin/wrangler.js', 'deploy', '--dry-run', '--outdir', outdir]);
    for (const binding of ['env.DB', 'env.BLOBS', 'env.BUILDS', 'env.PARTS', 'nearveil-builds']) expect(printed, binding).toContain(binding);
    const files = readdirSync(outdir, { recursive: true, encoding: 'utf8' }).map((f) => join(outdir, f)).filter((f) => statSync(f).isFile() && !f.endsWith('.map'));
    const code = files.filter((f) => /\.(js|mjs|wasm)$/.test(f));
    const gzipBytes = code.reduce((sum, f) => sum + gzipSync(readFileSync(f)).length, 0);
    console.log(`deploy bundle: ${code.length} files, ${(gzipBytes / 1024).toFixed(0)} KiB gzipped (${files.map((f) => f.slice(outdir.length + 1)).join(', ')})`);
    expect(gzipBytes).toBeLessThan(3 * 1024 * 1024);
    const text = code.filter((f) => !f.endsWith('.wasm')).map((f) => readFileSync(f, 'utf8')).join('\n');
    for (const nodeOnly of ['node:child_process', 'node:fs', 'node:os', 'node:net', 'node:readline', 'wrangler/bin']) expect(text, nodeOnly).not.toContain(nodeOnly);
  });
});
