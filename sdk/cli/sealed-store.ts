import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { SealedFileCache } from '../details-round.ts';

/** Sealed files kept per client home. They are sealed (useless without keys); a few suffice. */
const KEEP = 4;

/**
 * The CLI's sealed-file cache: `<home>/sealed/<sha256>.nvs`, so repeated `query --details` runs
 * download a version's sealed file once. The SDK checks the SHA-256 of whatever it reads here.
 */
export function diskSealedCache(home: string): SealedFileCache {
  const dir = join(home, 'sealed');
  const path = (sha256: string) => join(dir, `${sha256}.nvs`);
  return {
    async get(sha256) {
      return existsSync(path(sha256)) ? new Uint8Array(readFileSync(path(sha256))) : null;
    },
    async put(sha256, bytes) {
      mkdirSync(dir, { recursive: true, mode: 0o700 });
      // Oldest first, so the newest KEEP - 1 stay beside the new one.
      const others = readdirSync(dir)
        .filter((f) => f.endsWith('.nvs'))
        .sort((a, b) => statSync(join(dir, a)).mtimeMs - statSync(join(dir, b)).mtimeMs);
      for (const old of others.slice(0, Math.max(0, others.length - KEEP + 1))) rmSync(join(dir, old), { force: true });
      writeFileSync(path(sha256), bytes, { mode: 0o600 });
    },
  };
}
