import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
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

export function writePrivateJson(path: string, value: unknown): void {
  mkdirSync(dirname(path), { recursive: true, mode: 0o700 });
  writeFileSync(path, JSON.stringify(value, null, 2) + '\n', { mode: 0o600 });
}
