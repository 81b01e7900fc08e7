// `npm run bench`, modulus proofs in a browser: the same key generation and proof as the SDK's,
// bundled by vite and run in Debian's headless Chromium (no GPU), served from 127.0.0.1.
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createServer } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import { build } from 'vite';

const CHROMIUM = process.env.NEARVEIL_CHROMIUM ?? '/usr/bin/chromium';

export interface BrowserProofRow {
  bits: number;
  lowOnes: boolean;
  generateMs: number;
  proveMs: number;
  verifyMs: number;
  proofBytes: number;
}

/** Median figures over `keys` keys per size (default key form), or null when Chromium is not installed. */
export async function browserProofBench(keys: number): Promise<BrowserProofRow[] | null> {
  if (!existsSync(CHROMIUM)) return null;
  const out = mkdtempSync(join(tmpdir(), 'nearveil-proof-bench-'));
  const entry = fileURLToPath(new URL('./browser/proof-entry.ts', import.meta.url));
  await build({ configFile: false, logLevel: 'warn', build: { outDir: out, emptyOutDir: true, target: 'es2022', lib: { entry, formats: ['es'], fileName: () => 'proof.js' } } });
  const script = readFileSync(join(out, 'proof.js'));
  const server = createServer((req, res) => {
    if (req.url === '/proof.js') return void res.writeHead(200, { 'content-type': 'text/javascript' }).end(script);
    res.writeHead(200, { 'content-type': 'text/html' }).end('<!doctype html><script type="module" src="/proof.js"></script>');
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as { port: number }).port;
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-quic', '--no-first-run', '--disable-component-update', '--disable-sync'] });
  try {
    const page = await browser.newPage();
    await page.goto(`http://127.0.0.1:${port}/`);
    await page.waitForFunction(() => 'keyAndProof' in globalThis);
    const rows: BrowserProofRow[] = [];
    for (const bits of [2048, 3072]) {
      const runs: Array<Omit<BrowserProofRow, 'bits' | 'lowOnes'>> = [];
      for (let i = 0; i < keys; i++) runs.push(await page.evaluate((b) => (globalThis as unknown as { keyAndProof(b: number, l: boolean): Promise<Omit<BrowserProofRow, 'bits' | 'lowOnes'>> }).keyAndProof(b, true), bits));
      const median = (f: (r: (typeof runs)[number]) => number) => runs.map(f).sort((a, b) => a - b)[Math.floor(runs.length / 2)]!;
      rows.push({ bits, lowOnes: true, generateMs: median((r) => r.generateMs), proveMs: median((r) => r.proveMs), verifyMs: median((r) => r.verifyMs), proofBytes: runs[0]!.proofBytes });
    }
    return rows;
  } finally {
    await browser.close();
    server.close();
    rmSync(out, { recursive: true, force: true });
  }
}

export function formatBrowserProofBench(rows: BrowserProofRow[] | null): string {
  if (rows === null) return `(skipped: no Chromium at ${CHROMIUM})`;
  return [
    'bits  key generation ms  prove ms  verify ms  proof bytes',
    ...rows.map((r) => `${String(r.bits).padEnd(5)} ${r.generateMs.toFixed(0).padStart(17)}  ${r.proveMs.toFixed(0).padStart(8)}  ${r.verifyMs.toFixed(1).padStart(9)}  ${r.proofBytes.toLocaleString('en-GB').padStart(11)}`),
  ].join('\n');
}
