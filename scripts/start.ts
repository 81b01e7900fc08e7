/**
 * `npm start`: runs nearveil locally on its embedded default (wrangler dev with D1 and R2 on
 * disk), listening on 127.0.0.1 only. The first start creates the demo tenant, an admin token,
 * an API key and the invented Harrow Vale dataset, and writes them to .nearveil/.
 * Environment: PORT (default 8787), NEARVEIL_STATE (default .wrangler/state), NEARVEIL_HOME,
 * NEARVEIL_INSPECTOR_PORT (wrangler's debugger port, default 9229: tests that start servers side
 * by side give each its own).
 */
import { join, resolve } from 'node:path';
import { connectAdmin } from '../sdk/admin.ts';
import { NearveilError } from '../sdk/http.ts';
import { CREDENTIALS_FILE, nearveilHome, writePrivateJson } from '../sdk/cli/dev-home.ts';
import { harrowValeCsv } from './demo/harrow-vale.ts';
import { DEMO_DATASET, ensureDemoTenant } from './dev/seed.ts';
import { PROJECT_ROOT, startWranglerDev, wrangler } from './dev/wrangler.ts';

const port = Number(process.env.PORT ?? 8787);
const endpoint = `http://127.0.0.1:${port}`;
const persistTo = resolve(PROJECT_ROOT, process.env.NEARVEIL_STATE ?? '.wrangler/state');
const home = process.env.NEARVEIL_HOME ? resolve(process.env.NEARVEIL_HOME) : nearveilHome(PROJECT_ROOT);

async function waitForHealth(deadlineMs: number): Promise<void> {
  const until = Date.now() + deadlineMs;
  while (Date.now() < until) {
    try {
      if ((await fetch(`${endpoint}/healthz`)).ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error(`the Worker did not answer ${endpoint}/healthz within ${deadlineMs / 1000} s`);
}

async function ensureDemoDataset(adminToken: string): Promise<void> {
  const admin = connectAdmin({ endpoint, token: adminToken });
  await admin.ensureDataset(DEMO_DATASET, 'Harrow Vale care sites (invented demo)');
  const { activeVersion } = await admin.versions(DEMO_DATASET);
  if (activeVersion !== null) return;
  console.log('Seeding the invented Harrow Vale demo dataset (2,000 sites)...');
  const uploaded = await admin.uploadSiteTable(DEMO_DATASET, harrowValeCsv());
  const built = await admin.build(DEMO_DATASET, uploaded.version);
  // workerd may recycle the isolate after the large build; publishing again is harmless.
  for (let attempt = 1; ; attempt++) {
    try {
      await admin.publish(DEMO_DATASET, uploaded.version);
      break;
    } catch (err) {
      if (!(err instanceof NearveilError && err.status === 503) || attempt === 3) throw err;
      await new Promise((r) => setTimeout(r, 1000));
    }
  }
  console.log(`Demo dataset ${DEMO_DATASET} v${uploaded.version}: matrix ${built.matrix.rows} x ${built.matrix.columns}.`);
}

async function start(): Promise<void> {
  console.log('Applying D1 migrations to the local database...');
  wrangler(['d1', 'migrations', 'apply', 'DB', '--local', '--persist-to', persistTo]);
  const credentials = ensureDemoTenant(persistTo, home, endpoint);
  const credentialsPath = join(home, CREDENTIALS_FILE);
  writePrivateJson(credentialsPath, credentials);

  const inspector = process.env.NEARVEIL_INSPECTOR_PORT ? ['--inspector-port', process.env.NEARVEIL_INSPECTOR_PORT] : [];
  const dev = startWranglerDev(['--ip', '127.0.0.1', '--port', String(port), '--persist-to', persistTo, '--show-interactive-dev-session=false', ...inspector]);
  const stop = () => dev.kill('SIGTERM');
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
  dev.on('exit', (code) => process.exit(code ?? 0));

  await waitForHealth(120_000);
  await ensureDemoDataset(credentials.adminToken);
  console.log(
    [
      '',
      `nearveil is running at ${endpoint} (GET /healthz answers 200).`,
      `Dev credentials (admin token, API key): ${credentialsPath}`,
      `Try, in a second terminal:`,
      `  npx nearveil query --dataset ${DEMO_DATASET} --lat 45.62 --lon -111.42 --json`,
      `  npx nearveil import demo/my-sites.csv --dataset pharmacies --publish`,
      'Press Ctrl-C to stop.',
      '',
    ].join('\n'),
  );
}

start().catch((err) => {
  console.error(err instanceof NearveilError ? `nearveil: ${err.message}` : err);
  process.exit(1);
});
