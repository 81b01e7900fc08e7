import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';
import { roundMilliseconds } from '../../sdk/cli/round-milliseconds.ts';

const run = runCli;

describe('CLI messages a newcomer meets first', () => {
  it('prints its version for --version, as package.json states it', async () => {
    const { version } = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };
    for (const flag of ['--version', '-v', 'version']) expect(await run([flag])).toEqual({ code: 0, out: `nearveil ${version}`, err: '' });
  });

  it('says how to start the server when none answers', async () => {
    // Port 9 (discard, RFC 863) on loopback: nothing listens there on these machines.
    const r = await run(['usage', '--endpoint', 'http://127.0.0.1:9'], { NEARVEIL_TOKEN: 'nva_invented' });
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/cannot reach http:\/\/127\.0\.0\.1:9/);
    expect(r.err).toMatch(/is the server running\? Start a local one with `npm start`/);
  });

  it('rounds the milliseconds of a cost to 0.1, nested ones too, and leaves other figures alone', () => {
    const cost = { clientMs: 384.4897079999996, serverMs: null, bytesUp: 109322, details: { clientMs: 12.04999, serverMs: 7.25 }, rows: 960 };
    expect(roundMilliseconds(cost)).toEqual({ clientMs: 384.5, serverMs: null, bytesUp: 109322, details: { clientMs: 12, serverMs: 7.3 }, rows: 960 });
  });
});
