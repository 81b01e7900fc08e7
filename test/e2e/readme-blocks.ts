import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT } from '../product-server.ts';

/** The fenced code blocks of one README section (`## heading`), in order, with their language. */
export function readmeBlocks(heading: string): Array<{ lang: string; code: string }> {
  const text = readFileSync(join(ROOT, 'README.md'), 'utf8');
  const start = text.indexOf(`\n## ${heading}\n`);
  if (start < 0) throw new Error(`README has no section "## ${heading}"`);
  const end = text.indexOf('\n## ', start + 1);
  const section = text.slice(start, end < 0 ? undefined : end);
  return [...section.matchAll(/```(\w*)\n([\s\S]*?)```/g)].map((m) => ({ lang: m[1]!, code: m[2]! }));
}

/** The command lines of a shell block: comments and blank lines left out. */
export const commandLines = (code: string) =>
  code
    .split('\n')
    .map((line) => line.replace(/\s+#.*$/, '').trim())
    .filter((line) => line !== '' && !line.startsWith('#'));
