/**
 * `npm start`: runs nearveil locally on its embedded default (wrangler dev with D1 and R2 on
 * disk), listening on 127.0.0.1 only. The first start creates the demo tenant, an admin token,
 * an API key, the operator and the demo tenant's admin and editor users (random passwords) and
 * the invented Harrow Vale dataset, and writes the credentials to .nearveil/.
 * Environment: PORT (default 8787), NEARVEIL_STATE (default .wrangler/state), NEARVEIL_HOME,
 * NEARVEIL_INSPECTOR_PORT (wrangler's debugger port; default 9229).
 */
import { join, resolve } from 'node:path';
import { connectAdmin } from '../sdk/admin.ts';
import { NearveilError } from '../sdk/http.ts';
import { CREDENTIALS_FILE, nearveilHome, readDevCredentials, writePrivateJson } from '../sdk/cli/dev-home.ts';
import { harrowValeCsv } from './demo/harrow-vale.ts';
import { DEMO_DATASET, ensureDemoTariff, ensureDemoTenant, ensureDevUsers } from './dev/seed.ts';
import type { ChildProcess } from 'node:child_process';
import { snapshotSources } from './dev/source-snapshot.ts';
import { PROJECT_ROOT, startWranglerDev, stopWranglerDev, wrangler } from './dev/wrangler.ts';

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

/**
 * wrangler dev sometimes reloads its runtime right after a long request (the demo build) and
 * answers the next POST with 503 "restarted mid-request"; publishing is idempotent, so try again.
 */
async function retryAfterRestart<T>(call: () => Promise<T>): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await call();
    } catch (err) {
      if (!(err instanceof NearveilError && err.status === 503 && /restarted/.test(err.message)) || attempt === 3) throw err;
      await new Promise((r) => setTimeout(r, 1000));
    }
  }
}

async function ensureDemoDataset(adminToken: string): Promise<void> {
  const admin = connectAdmin({ endpoint, token: adminToken });
  await admin.ensureDataset(DEMO_DATASET, 'Harrow Vale care sites (invented demo)');
  const { activeVersion } = await admin.versions(DEMO_DATASET);
  if (activeVersion !== null) return;
  console.log('Seeding the invented Harrow Vale demo dataset (2,000 sites)...');
  const uploaded = await admin.uploadSiteTable(DEMO_DATASET, harrowValeCsv());
  const built = await admin.build(DEMO_DATASET, uploaded.version);
  await retryAfterRestart(() => admin.publish(DEMO_DATASET, uploaded.version));
  console.log(`Demo dataset ${DEMO_DATASET} v${uploaded.version}: matrix ${built.matrix.rows} x ${built.matrix.columns}.`);
}

async function start(): Promise<void> {
  console.log('Applying D1 migrations to the local database...');
  wrangler(['d1', 'migrations', 'apply', 'DB', '--local', '--persist-to', persistTo]);
  const credentialsPath = join(home, CREDENTIALS_FILE);
  const savedUsers = (readDevCredentials(home).users ?? {}) as Parameters<typeof ensureDevUsers>[1];
  const credentials = { ...ensureDemoTenant(persistTo, home, endpoint), users: await ensureDevUsers(persistTo, savedUsers) };
  writePrivateJson(credentialsPath, credentials);
  ensureDemoTariff(persistTo);

  // The Worker's binding to itself is found through wrangler's dev registry. A registry of this
  // state folder's own keeps other local runs of a Worker named "nearveil" from reloading this one.
  // Tests that start servers side by side give each its own debugger port (wrangler's default is 9229).
  const inspector = process.env.NEARVEIL_INSPECTOR_PORT ? ['--inspector-port', process.env.NEARVEIL_INSPECTOR_PORT] : [];
  // From a copy of the sources: wrangler dev would otherwise restart the Worker on every edit.
  const snapshot = snapshotSources(`port-${port}`);
  process.on('exit', () => snapshot.remove());
  const dev = startWranglerDev(['--config', snapshot.config, '--ip', '127.0.0.1', '--port', String(port), '--persist-to', persistTo, '--show-interactive-dev-session=false', ...inspector], {
    WRANGLER_REGISTRY_PATH: join(persistTo, 'dev-registry'),
  });
  devProcess = dev;
  const stop = () => void stopWranglerDev(dev).then(() => process.exit(0));
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
  dev.on('exit', (code) => process.exit(code ?? 0));

  await waitForHealth(120_000);
  await ensureDemoDataset(credentials.adminToken);
  console.log(
    [
      '',
      `nearveil is running at ${endpoint} (GET /healthz answers 200).`,
      `Dev credentials (admin token, API key, and sign-ins for the operator, tenant admin and editor): ${credentialsPath}`,
      `Try, in a second terminal:`,
      `  npx nearveil query --dataset ${DEMO_DATASET} --lat -75.93 --lon 60.52 --json`,
      `  npx nearveil import demo/my-sites.csv --dataset pharmacies --max-k 3 --publish`,
      'Press Ctrl-C to stop.',
      '',
    ].join('\n'),
  );
}

/** Set once wrangler dev runs, so a failed start never leaves it listening on the port. */
let devProcess: ChildProcess | undefined;

start().catch(async (err) => {
  console.error(err instanceof NearveilError ? `nearveil: ${err.message}` : err);
  if (devProcess) await stopWranglerDev(devProcess);
  process.exit(1);
});
