import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { d1Execute } from '../../sdk/cli/wrangler-d1.ts';

export const PROJECT_ROOT = fileURLToPath(new URL('../../', import.meta.url));
const WRANGLER = fileURLToPath(new URL('../../node_modules/wrangler/bin/wrangler.js', import.meta.url));

/** No account, no telemetry, no update checks: local runs stay on this machine. */
const QUIET_ENV = { ...process.env, WRANGLER_SEND_METRICS: 'false', CLOUDFLARE_CF_FETCH_ENABLED: 'false', NO_COLOR: '1' };

/** Runs one wrangler command to completion and returns its stdout; throws with its output on failure. */
export function wrangler(args: string[]): string {
  const run = spawnSync(process.execPath, [WRANGLER, ...args], { cwd: PROJECT_ROOT, env: QUIET_ENV, encoding: 'utf8', timeout: 180_000 });
  if (run.status !== 0) {
    throw new Error(`wrangler ${args.slice(0, 3).join(' ')} failed (exit ${run.status}):\n${run.stdout}\n${run.stderr}`);
  }
  return run.stdout;
}

/**
 * Starts `wrangler dev` in the background in its own process group (wrangler runs workerd and
 * esbuild as children), so stopWranglerDev can end all of them; its output goes to ours, prefixed.
 */
export function startWranglerDev(args: string[], extraEnv: Record<string, string> = {}): ChildProcess {
  const env = { ...QUIET_ENV, ...extraEnv };
  const child = spawn(process.execPath, [WRANGLER, 'dev', ...args], { cwd: PROJECT_ROOT, env, stdio: ['ignore', 'pipe', 'pipe'], detached: true });
  const relay = (stream: NodeJS.ReadableStream | null, out: NodeJS.WriteStream) =>
    stream?.on('data', (chunk: Buffer) => {
      for (const line of chunk.toString().split('\n')) if (line.trim()) out.write(`[worker] ${line}\n`);
    });
  relay(child.stdout, process.stdout);
  relay(child.stderr, process.stderr);
  return child;
}

/** Runs SQL against the local D1 database and returns the rows of the last statement. */
export function localSql(persistTo: string, sql: string): Array<Record<string, unknown>> {
  return d1Execute({ where: 'local', persistTo, database: 'DB' }, sql);
}

/** Ends wrangler dev and its children: SIGTERM to the group, SIGKILL if it is still there after 3 s. */
export async function stopWranglerDev(child: ChildProcess): Promise<void> {
  if (child.pid === undefined || child.exitCode !== null) return;
  const signalGroup = (signal: NodeJS.Signals) => {
    try {
      process.kill(-child.pid!, signal);
    } catch {
      // the group is gone already
    }
  };
  signalGroup('SIGTERM');
  const exited = new Promise<boolean>((resolve) => child.once('exit', () => resolve(true)));
  const late = new Promise<boolean>((resolve) => setTimeout(() => resolve(false), 3000).unref());
  if (!(await Promise.race([exited, late]))) signalGroup('SIGKILL');
}
