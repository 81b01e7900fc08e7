import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { resolveConnection } from '../../sdk/cli/options.ts';

/** Secrets on a command line are visible to other users through `ps` (procfs; common practice). */
describe('CLI secrets', () => {
  let home: string;
  const saved = { ...process.env };
  beforeEach(() => {
    home = mkdtempSync(join(tmpdir(), 'nearveil-secrets-'));
    process.env.NEARVEIL_HOME = home;
    delete process.env.NEARVEIL_API_KEY;
    delete process.env.NEARVEIL_TOKEN;
    delete process.env.NEARVEIL_ENDPOINT;
  });
  afterEach(() => {
    process.env = { ...saved };
    rmSync(home, { recursive: true, force: true });
  });

  it('reads the API key, admin token and endpoint from the environment without a warning', () => {
    process.env.NEARVEIL_API_KEY = 'nvk_from_env';
    process.env.NEARVEIL_TOKEN = 'nva_from_env';
    process.env.NEARVEIL_ENDPOINT = 'http://127.0.0.1:9999';
    const warnings: string[] = [];
    const conn = resolveConnection({}, (w) => warnings.push(w));
    expect(conn).toMatchObject({ apiKey: 'nvk_from_env', token: 'nva_from_env', endpoint: 'http://127.0.0.1:9999' });
    expect(warnings).toEqual([]);
  });

  it('still takes --api-key and --token, over the environment, with a warning naming the variable to use', () => {
    process.env.NEARVEIL_API_KEY = 'nvk_from_env';
    const warnings: string[] = [];
    const conn = resolveConnection({ 'api-key': 'nvk_flag', token: 'nva_flag' }, (w) => warnings.push(w));
    expect(conn).toMatchObject({ apiKey: 'nvk_flag', token: 'nva_flag' });
    expect(warnings).toHaveLength(2);
    expect(warnings[0]).toMatch(/--api-key puts a secret on the command line.*set NEARVEIL_API_KEY instead/);
    expect(warnings[1]).toMatch(/--token .*set NEARVEIL_TOKEN instead/);
  });
});
