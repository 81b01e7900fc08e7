import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../sdk/cli/main.ts';

const folder = mkdtempSync(join(tmpdir(), 'nearveil-utf8-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

async function run(argv: string[]) {
  const out: string[] = [];
  const err: string[] = [];
  const code = await main(argv, (l) => out.push(l), (l) => err.push(l));
  return { code, out, err };
}

describe('the CLI refuses a site table that is not UTF-8 (RFC 3629) before sending or building it', () => {
  // Invented kiosks; "Skèrry" saved as ISO 8859-1, where è is the single byte 0xE8.
  const file = join(folder, 'fenwick-latin1.csv');
  const head = Buffer.from('id,name,lat,lon\nk1,Tarn Slip,57.2,-6.3\nk2,Sk', 'latin1');
  writeFileSync(file, Buffer.concat([head, Buffer.from([0xe8]), Buffer.from('rry Pier,57.1,-6.2\n', 'latin1')]));
  // 16 bytes of header, 23 of the first row, then 5 of "k2,Sk": the bad byte is at offset 44, on line 3.
  const expected = `nearveil: ${file}: expected UTF-8 text, got byte 0xE8 at line 3 (byte offset 44)`;

  it('import: one line naming file, line and byte offset, exit code 2, nothing contacted', async () => {
    // The endpoint is a closed port: reaching it would give a different error.
    const { code, err } = await run(['import', file, '--dataset', 'fenwick', '--endpoint', 'http://127.0.0.1:9', '--token', 'nva_unused']);
    expect(code).toBe(2);
    expect(err).toHaveLength(1);
    expect(err[0]).toMatch(new RegExp(`^${expected.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}.*re-save the file with the UTF-8 encoding`));
  });

  it('plan: the same line', async () => {
    const { code, err } = await run(['plan', file]);
    expect(code).toBe(2);
    expect(err).toHaveLength(1);
    expect(err[0]!.startsWith(expected)).toBe(true);
  });
});
