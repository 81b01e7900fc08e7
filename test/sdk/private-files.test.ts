import { chmodSync, mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writePrivateJson } from '../../sdk/cli/dev-home.ts';

const scratch = mkdtempSync(join(tmpdir(), 'nearveil-private-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));
const modeOf = (path: string) => statSync(path).mode & 0o777;

// POSIX permission bits (common practice): 0600 = owner read and write only, 0700 = owner only.
describe('writePrivateJson: credentials and keys readable by their owner only', () => {
  it('makes a new folder 0700 and a new file 0600', () => {
    const path = join(scratch, 'fresh', 'dev-credentials.json');
    writePrivateJson(path, { apiKey: 'nvk_invented' });
    expect(modeOf(join(scratch, 'fresh'))).toBe(0o700);
    expect(modeOf(path)).toBe(0o600);
    expect(JSON.parse(readFileSync(path, 'utf8'))).toEqual({ apiKey: 'nvk_invented' });
  });

  it('narrows an existing 0644 file and 0755 folder, as a copy or an older version left them', () => {
    const dir = join(scratch, 'old');
    mkdirSync(dir, { mode: 0o755 });
    chmodSync(dir, 0o755);
    const path = join(dir, 'key-2048.json');
    writeFileSync(path, '{"old": true}\n', { mode: 0o644 });
    chmodSync(path, 0o644);
    writePrivateJson(path, { new: true });
    expect(modeOf(dir)).toBe(0o700);
    expect(modeOf(path)).toBe(0o600);
    expect(JSON.parse(readFileSync(path, 'utf8'))).toEqual({ new: true });
  });
});
