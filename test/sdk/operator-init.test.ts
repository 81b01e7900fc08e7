import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';
import { verifyPassword } from '../../api/auth/password-hash.ts';
import { d1Execute, type D1Target } from '../../sdk/cli/wrangler-d1.ts';
import { ROOT } from '../product-server.ts';

const run = runCli;

// A fresh local D1 state with the migrations applied, as a new deployment has: no user at all.
let state: string;
let target: D1Target;
beforeAll(() => {
  state = mkdtempSync(join(tmpdir(), 'nearveil-operator-'));
  target = { where: 'local', persistTo: state, database: 'DB' };
  const applied = spawnSync(process.execPath, ['node_modules/wrangler/bin/wrangler.js', 'd1', 'migrations', 'apply', 'DB', '--local', '--persist-to', state], {
    cwd: ROOT,
    env: { ...process.env, WRANGLER_SEND_METRICS: 'false', CLOUDFLARE_CF_FETCH_ENABLED: 'false' },
    encoding: 'utf8',
  });
  expect(applied.status, applied.stderr).toBe(0);
});
afterAll(() => rmSync(state, { recursive: true, force: true }));

describe('nearveil operator init (a fresh deployment has no way in otherwise)', () => {
  const local = () => ['operator', 'init', '--local', '--persist-to', state];

  it('refuses without a password from the environment and no terminal to ask at, and never takes one on the command line', async () => {
    const none = await run([...local(), '--email', 'first@example.test'], { NEARVEIL_OPERATOR_PASSWORD: undefined });
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/set NEARVEIL_OPERATOR_PASSWORD, or run at a terminal/);
    const flag = await run([...local(), '--email', 'first@example.test', '--password', 'a long enough password']);
    expect(flag.code).toBe(2);
    expect(flag.err).toMatch(/Unknown option '--password'/);
    expect(d1Execute(target, 'SELECT count(*) AS n FROM users')[0]!.n).toBe(0);
  });

  it('refuses a bad email, a short password, and both or neither of --local and --remote, writing nothing', async () => {
    const env = { NEARVEIL_OPERATOR_PASSWORD: 'a long enough password' };
    expect((await run([...local(), '--email', 'not an address'], env)).err).toMatch(/--email: expected the operator's email address/);
    expect((await run([...local(), '--email', 'first@example.test'], { NEARVEIL_OPERATOR_PASSWORD: 'short' })).err).toMatch(/operator password: use at least 12 characters/);
    expect((await run(['operator', 'init', '--local', '--remote', '--email', 'first@example.test'], env)).err).toMatch(/exactly one of --local and --remote/);
    expect((await run(['operator', 'init', '--email', 'first@example.test'], env)).err).toMatch(/exactly one of --local and --remote/);
    expect((await run(['operator', 'start', '--local'], env)).err).toMatch(/expected `nearveil operator init`/);
    expect(d1Execute(target, 'SELECT count(*) AS n FROM users')[0]!.n).toBe(0);
  });

  it('writes the operator with a scrypt hash of the password and an audit entry, then refuses a second one', async () => {
    const made = await run([...local(), '--email', 'First@Example.test'], { NEARVEIL_OPERATOR_PASSWORD: 'the first operator password' });
    expect(made.err).toBe('');
    expect(made.code).toBe(0);
    expect(made.out).toMatch(/Operator first@example\.test created in the local database DB/);
    const [row] = d1Execute(target, `SELECT email, role, tenant_id, password_hash FROM users`);
    expect(row).toMatchObject({ email: 'first@example.test', role: 'operator', tenant_id: null });
    expect(String(row!.password_hash)).toMatch(/^scrypt\$14\$8\$5\$/);
    expect((await verifyPassword('the first operator password', String(row!.password_hash))).ok).toBe(true);
    expect(d1Execute(target, `SELECT action, target FROM audit_events`)).toEqual([{ action: 'user.create', target: 'user first@example.test' }]);

    const again = await run([...local(), '--email', 'second@example.test'], { NEARVEIL_OPERATOR_PASSWORD: 'another long password' });
    expect(again.code).toBe(2);
    expect(again.err).toMatch(/already has an operator; sign in as that one/);
    expect(d1Execute(target, 'SELECT count(*) AS n FROM users')[0]!.n).toBe(1);
  });
});
