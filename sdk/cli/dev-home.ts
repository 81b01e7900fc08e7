import { chmodSync, existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { CliError } from './cli-error.ts';

/**
 * Local state of the CLI lives in a `.nearveil/` folder (git-ignored): the dev credentials the
 * first `npm start` writes, and the client's PIR key pair. NEARVEIL_HOME names the folder;
 * otherwise the nearest `.nearveil/` above the working directory, else `./.nearveil/`.
 */
export function nearveilHome(cwd = process.cwd()): string {
  if (process.env.NEARVEIL_HOME) return resolve(process.env.NEARVEIL_HOME);
  for (let dir = resolve(cwd); ; dir = dirname(dir)) {
    if (existsSync(join(dir, '.nearveil'))) return join(dir, '.nearveil');
    if (dirname(dir) === dir) return join(resolve(cwd), '.nearveil');
  }
}

export interface DevCredentials {
  endpoint: string;
  tenant: string;
  adminToken: string;
  apiKey: string;
  demoDataset: string;
  /** Console sign-ins (POST /v1/session) made by the first `npm start`: operator, tenant admin, editor. */
  users?: Record<string, { email: string; password: string; role: string }>;
}

export const CREDENTIALS_FILE = 'dev-credentials.json';

export function readDevCredentials(home = nearveilHome()): Partial<DevCredentials> {
  const path = join(home, CREDENTIALS_FILE);
  if (!existsSync(path)) return {};
  try {
    return JSON.parse(readFileSync(path, 'utf8')) as Partial<DevCredentials>;
  } catch {
    throw new CliError(`${path} is not valid JSON; delete it and run \`npm start\` again`);
  }
}

/**
 * Writes JSON that holds secrets (credentials, a private key) readable by its owner only: the
 * file 0600 and its folder 0700, even where an older file or folder had a wider mode (writing
 * over a file keeps its mode, so the new content goes to a fresh file renamed over it). A folder
 * nearveil cannot chmod (not its owner) is left as it is; the file alone still keeps others out.
 */
export function writePrivateJson(path: string, value: unknown): void {
  const dir = dirname(path);
  mkdirSync(dir, { recursive: true, mode: 0o700 });
  try {
    chmodSync(dir, 0o700);
  } catch {
    // not our folder: the file's own mode below still applies
  }
  const fresh = `${path}.${process.pid}.tmp`;
  writeFileSync(fresh, JSON.stringify(value, null, 2) + '\n', { mode: 0o600 });
  renameSync(fresh, path);
}
