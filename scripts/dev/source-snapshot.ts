import { cpSync, mkdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { PROJECT_ROOT } from './wrangler.ts';

/** What wrangler dev bundles and serves: the Worker's sources, the built console, migrations, the config. */
const SNAPSHOT_PARTS = ['api', 'core', '.console-build', 'migrations', 'wrangler.toml'] as const;

/**
 * Copies what the Worker is built from into .wrangler/run/<name>/ and returns its wrangler.toml.
 * wrangler dev watches every file it bundles and restarts the Worker when one changes, answering
 * requests in flight with 503 "restarted mid-request"; run from a copy, edits made to the checkout
 * while the product runs (or a console rebuilt by a test beside it) never reach it. The copy sits
 * under the project, so packages still resolve from its node_modules and tsconfig.json.
 */
export function snapshotSources(name: string): { config: string; remove(): void } {
  const dir = join(PROJECT_ROOT, '.wrangler', 'run', name);
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  for (const part of SNAPSHOT_PARTS) cpSync(join(PROJECT_ROOT, part), join(dir, part), { recursive: true });
  return { config: join(dir, 'wrangler.toml'), remove: () => rmSync(dir, { recursive: true, force: true }) };
}
