import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { ERROR_CODES } from '../../api/http/error-codes.ts';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));

function sources(dir: string): string[] {
  return readdirSync(join(ROOT, dir)).flatMap((name) => {
    const path = join(dir, name);
    return statSync(join(ROOT, path)).isDirectory() ? sources(path) : path.endsWith('.ts') ? [path] : [];
  });
}

/** Codes written literally where errors are made: new ApiError(status, 'code', ...), new InputError('code', ...), errorBody('code', ...). */
function thrownCodes(): Map<string, string> {
  const found = new Map<string, string>();
  for (const file of [...sources('api'), ...sources('core')]) {
    const text = readFileSync(join(ROOT, file), 'utf8');
    for (const m of text.matchAll(/new ApiError\(\s*\d{3},\s*'([a-z_]+)'\s*,|new InputError\(\s*'([a-z_]+)'\s*,|errorBody\(\s*'([a-z_]+)'\s*,/g)) {
      found.set(m[1] ?? m[2] ?? m[3]!, file);
    }
  }
  return found;
}

describe('the error code list of the API reference', () => {
  it('names every code the api and core folders throw', () => {
    const thrown = thrownCodes();
    expect(thrown.size).toBeGreaterThan(30);
    const missing = [...thrown].filter(([code]) => !(code in ERROR_CODES)).map(([code, file]) => `${code} (${file})`);
    expect(missing).toEqual([]);
  });

  it('gives each code a sentence with its HTTP status', () => {
    for (const [code, text] of Object.entries(ERROR_CODES)) {
      expect(code).toMatch(/^[a-z][a-z_]*$/);
      if (code !== 'matrix_format') expect(text, code).toMatch(/\((\d{3})\)\.?$/);
    }
  });
});
