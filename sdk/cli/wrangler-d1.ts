import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { CliError } from './cli-error.ts';

const WRANGLER = fileURLToPath(new URL('../../node_modules/wrangler/bin/wrangler.js', import.meta.url));
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
/** No telemetry, no update checks; an account is asked for only by --remote. */
const QUIET_ENV = { ...process.env, WRANGLER_SEND_METRICS: 'false', NO_COLOR: '1' };

/** Which D1 database: the local one wrangler dev uses (in `persistTo`, if given) or the deployed one. */
export type D1Target = { where: 'local'; persistTo?: string; database: string } | { where: 'remote'; database: string };

/**
 * Runs SQL through `wrangler d1 execute` (the project's wrangler.toml names the database) and
 * returns the rows of the last statement. Values must already be quoted with sqlText.
 */
export function d1Execute(target: D1Target, sql: string): Array<Record<string, unknown>> {
  const where = target.where === 'local' ? ['--local', ...(target.persistTo ? ['--persist-to', target.persistTo] : [])] : ['--remote'];
  const run = spawnSync(process.execPath, [WRANGLER, 'd1', 'execute', target.database, ...where, '--json', '--command', sql], {
    cwd: ROOT,
    env: target.where === 'local' ? { ...QUIET_ENV, CLOUDFLARE_CF_FETCH_ENABLED: 'false' } : QUIET_ENV,
    encoding: 'utf8',
    timeout: 180_000,
  });
  if (run.status !== 0) {
    throw new CliError(`wrangler d1 execute ${target.database} --${target.where} failed (exit ${run.status}): ${(run.stderr || run.stdout).trim().slice(-800)}`);
  }
  const parsed = JSON.parse(run.stdout.slice(run.stdout.indexOf('['))) as Array<{ results: Array<Record<string, unknown>> }>;
  return parsed.at(-1)?.results ?? [];
}

/** A SQL string literal. */
export const sqlText = (s: string) => `'${s.replace(/'/g, "''")}'`;
