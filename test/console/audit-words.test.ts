import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { actionWords } from '../../console/src/team/audit-words.ts';
import { ROOT } from '../product-server.ts';

/** Every audit action code the API records: the `<object>.<verb>` literals on `action:` lines of api/. */
function recordedActions(): string[] {
  const files = readdirSync(join(ROOT, 'api'), { recursive: true, encoding: 'utf8' }).filter((f) => f.endsWith('.ts'));
  const actions = new Set<string>();
  for (const file of files) {
    for (const line of readFileSync(join(ROOT, 'api', file), 'utf8').split('\n')) {
      if (!/\baction: /.test(line)) continue;
      for (const m of line.matchAll(/'([a-z]+\.[a-z]+)'/g)) actions.add(m[1]!);
    }
  }
  return [...actions].sort();
}

describe('activity in words', () => {
  it('has words for every action the API records, so the activity list never shows a raw code', () => {
    const actions = recordedActions();
    expect(actions).toContain('finder.enable');
    expect(actions.length).toBeGreaterThanOrEqual(16);
    expect(actions.filter((action) => actionWords({ action, detail: null }) === action)).toEqual([]);
  });
});
