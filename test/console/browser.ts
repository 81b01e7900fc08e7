import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext } from 'playwright-core';

/** Debian's Chromium (apt-get install chromium); .ci/run installs it when missing. */
export const CHROMIUM = process.env.NEARVEIL_CHROMIUM ?? '/usr/bin/chromium';

/**
 * Real headless Chromium with a fresh profile, no outside traffic of its own (no background
 * networking, no component updates, no sync), at the 1280 x 800 the console is designed for.
 */
export async function launchBrowser(): Promise<{ context: BrowserContext; close(): Promise<void> }> {
  const profile = mkdtempSync(join(tmpdir(), 'nearveil-chromium-'));
  // A persistent context is how playwright takes --user-data-dir: here a fresh, throw-away one.
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    viewport: { width: 1280, height: 800 },
    deviceScaleFactor: 1,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-background-networking',
      '--disable-quic',
      '--no-first-run',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  return {
    context,
    async close() {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}
