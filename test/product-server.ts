import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

/** The checkout's root: tests start the product from here as `npm start` does. */
export const ROOT = fileURLToPath(new URL('../', import.meta.url));

/** A loopback port nothing listens on now (the server and wrangler's debugger take one each). */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const { port } = probe.address() as { port: number };
      probe.close(() => resolve(port));
    });
  });
}

export interface ProductServer {
  base: string;
  port: number;
  /** Its own state and home folders, removed by stop(). */
  scratch: string;
  /** The environment it runs with; commands like `npx nearveil` use the same. */
  env: NodeJS.ProcessEnv;
  /** Everything it printed so far. */
  log(): string;
  stop(): Promise<void>;
}

/**
 * Starts scripts/start.ts (what `npm start` runs after building the console) on free loopback
 * ports with fresh state, and waits until it says it is ready. It runs in its own process group,
 * so stop() ends wrangler and workerd with it and leaves nothing on the port.
 */
export async function startProduct(name: string): Promise<ProductServer> {
  const port = await freePort();
  const scratch = mkdtempSync(join(tmpdir(), `nearveil-${name}-`));
  const env = {
    ...process.env,
    PORT: String(port),
    NEARVEIL_INSPECTOR_PORT: String(await freePort()),
    NEARVEIL_STATE: join(scratch, 'state'),
    NEARVEIL_HOME: join(scratch, 'home'),
    CLOUDFLARE_CF_FETCH_ENABLED: 'false',
    WRANGLER_SEND_METRICS: 'false',
  };
  let printed = '';
  const child = spawn(process.execPath, ['node_modules/tsx/dist/cli.mjs', 'scripts/start.ts'], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'], detached: true });
  child.stdout!.on('data', (d: Buffer) => (printed += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (printed += d.toString()));
  const server: ProductServer = {
    base: `http://127.0.0.1:${port}`,
    port,
    scratch,
    env,
    log: () => printed,
    async stop() {
      await stopGroup(child);
      rmSync(scratch, { recursive: true, force: true });
      // The copy of the sources npm start ran from (scripts/dev/source-snapshot.ts), if the kill came first.
      rmSync(join(ROOT, '.wrangler', 'run', `port-${port}`), { recursive: true, force: true });
    },
  };
  const until = Date.now() + 170_000;
  while (!printed.includes('Press Ctrl-C')) {
    if (Date.now() > until || child.exitCode !== null) {
      await server.stop();
      throw new Error(`npm start did not come up:\n${printed}`);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return server;
}

async function stopGroup(child: ChildProcess): Promise<void> {
  if (!child.pid) return;
  const signal = (sig: NodeJS.Signals) => {
    try {
      process.kill(-child.pid!, sig);
    } catch {
      // already gone
    }
  };
  signal('SIGTERM');
  for (let i = 0; i < 50 && child.exitCode === null && child.signalCode === null; i++) await new Promise((r) => setTimeout(r, 100));
  signal('SIGKILL');
}
