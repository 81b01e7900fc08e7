import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { builtinModules } from 'node:module';
import { extname, join, normalize } from 'node:path';
import { build, type Plugin, type Rolldown } from 'vite';

/**
 * A tiny app page as a developer would write it against the installed package: it imports
 * "@nearveil/client" by name, keeps its key in IndexedDB and shows the nearest site with its
 * cautions and what the query cost. The test drives it through `window.trial`.
 */
const PAGE_HTML = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Client package trial</title>
<style>
  body { font: 16px/1.45 system-ui, sans-serif; margin: 0; background: #f4f1ea; color: #1d2a2a; }
  main { max-width: 44rem; margin: 2rem auto; padding: 1.5rem 2rem; background: #fffdf8; border: 1px solid #d8d1c2; border-radius: 6px; }
  h1 { font-size: 1.3rem; margin: 0 0 0.3rem; }
  .site { font-size: 1.15rem; font-weight: 600; }
  dl { display: grid; grid-template-columns: max-content 1fr; gap: 0.2rem 1rem; }
  dt { color: #56625f; }
  ul { padding-left: 1.2rem; color: #3b4745; font-size: 0.92rem; }
</style>
</head>
<body>
<main>
  <h1>Nearest site, asked privately</h1>
  <p id="status" role="status">Loading the client...</p>
  <section id="answer" aria-live="polite"></section>
</main>
<script type="module" src="./main.js"></script>
</body>
</html>
`;

const PAGE_SCRIPT = `import { connect, indexedDbKeyStore } from '@nearveil/client';

const warnings = [];
const clients = new Map();
const clientFor = (endpoint, apiKey) => {
  const id = endpoint + ' ' + apiKey;
  if (!clients.has(id)) clients.set(id, connect({ endpoint, apiKey, keyStore: indexedDbKeyStore({ warn: (line) => warnings.push(line) }) }));
  return clients.get(id);
};

const row = (term, value) => '<dt>' + term + '</dt><dd>' + value + '</dd>';
const kb = (bytes) => (bytes / 1024).toFixed(1) + ' KB';
const ms = (value) => Math.round(value) + ' ms';

function show(point, result, wallMs) {
  const site = result.results[0];
  const setup = result.cost.keySetup;
  const answer = document.getElementById('answer');
  answer.replaceChildren();
  const html = [
    '<p class="site">' + site.id + ', ' + (site.distanceMeters / 1000).toFixed(2) + ' km away</p>',
    '<dl>',
    row('Point asked', point.lat.toFixed(4) + ', ' + point.lon.toFixed(4) + ' (stayed on this device)'),
    row('Dataset', result.dataset + ' v' + result.version),
    row('Key', setup ? 'new: made in ' + ms(setup.generateMs) + ', proven in ' + ms(setup.proveMs) + ', registered in ' + ms(setup.registerMs) : 'reused from this browser'),
    row('Query', kb(result.cost.bytesUp) + ' up, ' + kb(result.cost.bytesDown) + ' down, ' + ms(wallMs)),
    '</dl>',
    '<ul>' + result.cautions.map((c) => '<li>' + c.text + '</li>').join('') + '</ul>',
  ];
  answer.insertAdjacentHTML('beforeend', html.join(''));
  document.getElementById('status').textContent = 'Answered.';
}

window.trial = {
  warnings,
  async nearest(endpoint, apiKey, dataset, point) {
    const t0 = performance.now();
    const result = await clientFor(endpoint, apiKey).nearest(dataset, point);
    const wallMs = performance.now() - t0;
    show(point, result, wallMs);
    return { ...result, wallMs };
  },
  forget: (endpoint, apiKey) => clientFor(endpoint, apiKey).forgetKey(),
};
document.getElementById('status').textContent = 'Ready.';
`;

/** Refuses any Node built-in while bundling the page: what a browser app cannot load. */
function refuseNodeModules(): Plugin {
  const builtins = new Set(builtinModules);
  return {
    name: 'trial:refuse-node-modules',
    enforce: 'pre',
    resolveId(source, importer) {
      if (source.startsWith('node:') || builtins.has(source)) this.error(`${importer ?? 'the page'} imports "${source}", a Node-only module`);
      return null;
    },
  };
}

/** Writes the page into `<project>/page`, bundles it with vite for browsers and returns the output folder and its scripts. */
export async function bundleTrialPage(project: string): Promise<{ outDir: string; scripts: string[] }> {
  const root = join(project, 'page');
  mkdirSync(root, { recursive: true });
  writeFileSync(join(root, 'index.html'), PAGE_HTML);
  writeFileSync(join(root, 'main.js'), PAGE_SCRIPT);
  const outDir = join(root, 'out');
  const result = await build({ configFile: false, logLevel: 'warn', root, publicDir: false, plugins: [refuseNodeModules()], build: { outDir, emptyOutDir: true, target: 'es2022', minify: true, modulePreload: { polyfill: false } } });
  const output = (Array.isArray(result) ? result.flatMap((r) => r.output) : (result as Rolldown.RolldownOutput).output).filter((o): o is Rolldown.OutputChunk => o.type === 'chunk');
  return { outDir, scripts: output.map((c) => c.code) };
}

const TYPES: Record<string, string> = { '.html': 'text/html; charset=utf-8', '.js': 'text/javascript; charset=utf-8' };

/** Serves a folder's files on 127.0.0.1 (a free port), nothing outside it. */
export async function serveFolder(folder: string): Promise<{ origin: string; close(): Promise<void> }> {
  const server: Server = createServer((req, res) => {
    const path = normalize(decodeURIComponent(new URL(req.url ?? '/', 'http://x').pathname)).replace(/^(\.\.[/\\])+/, '');
    const file = join(folder, path === '/' ? 'index.html' : path);
    try {
      const body = readFileSync(file);
      res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream', 'cache-control': 'no-store' }).end(body);
    } catch {
      res.writeHead(404, { 'content-type': 'text/plain' }).end('not found');
    }
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address() as { port: number };
  return { origin: `http://127.0.0.1:${port}`, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}
