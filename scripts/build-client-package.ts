/**
 * `npm run build:client`: builds the client package (packages/client) from sdk/ and the core/
 * code it reaches into <package>/dist, ready for `npm pack`:
 *   dist/index.js, dist/admin.js   ES modules for browsers and Node (the package's "." and "./admin")
 *   dist/cli/nearveil.js           the CLI (Node only), the package's `bin`
 *   dist/types/                    type declarations
 *   dist/THIRD-PARTY-NOTICES.txt   the licences of npm code bundled into the files above
 * The package's dependencies (zod, @noble/hashes) stay imports; everything else is bundled. The
 * build fails when the browser entries reach any Node-only module, and it ends by bundling a
 * tiny page that imports the client with vite, as an app would, to report its min+gzip size.
 * Options: --package-dir DIR (default packages/client; tests build a copy in a temp folder).
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { builtinModules } from 'node:module';
import { tmpdir } from 'node:os';
import { join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { gzipSync } from 'node:zlib';
import { build, type Plugin, type Rolldown } from 'vite';

const ROOT = fileURLToPath(new URL('../', import.meta.url));
/** The entry a browser bundle starts from, and the one size target of the issue (min+gzip). */
const BROWSER_BUDGET_BYTES = 40 * 1024;

const { values } = parseArgs({ options: { 'package-dir': { type: 'string', default: join(ROOT, 'packages', 'client') } } });
const packageDir = resolve(values['package-dir']!);
const dist = join(packageDir, 'dist');
const manifest = JSON.parse(readFileSync(join(packageDir, 'package.json'), 'utf8')) as { dependencies?: Record<string, string> };
const dependencies = Object.keys(manifest.dependencies ?? {});

/** True for an import of one of the package's own dependencies (kept as an import, never bundled). */
const isDependency = (id: string) => dependencies.some((name) => id === name || id.startsWith(name + '/'));

/** Fails the build on any import of a Node built-in: the browser entries must run without Node. */
function refuseNodeModules(what: string): Plugin {
  const builtins = new Set(builtinModules);
  return {
    name: 'nearveil:refuse-node-modules',
    enforce: 'pre',
    resolveId(source, importer) {
      if (source.startsWith('node:') || builtins.has(source)) {
        this.error(`${what}: ${importer ? relative(ROOT, importer) : 'the entry'} imports "${source}", a Node-only module; the browser entries may not reach it`);
      }
      return null;
    },
  };
}

/** The CLI's bin: runs sdk/cli/main.ts as sdk/cli/bin.mjs does from a checkout, without tsx. */
function cliEntry(): Plugin {
  const id = '\0nearveil-cli-entry';
  const main = join(ROOT, 'sdk', 'cli', 'main.ts');
  return {
    name: 'nearveil:cli-entry',
    resolveId: (source) => (source === 'nearveil-cli-entry' ? id : null),
    load: (loading) => (loading === id ? `import { main } from ${JSON.stringify(main)};\nprocess.exitCode = await main(process.argv.slice(2));\n` : null),
  };
}

/**
 * A JSON file the CLI reads with createRequire (the world's land, from world-atlas) becomes an
 * import, so it is bundled and the installed package needs no data package beside it.
 */
function inlineRequiredJson(): Plugin {
  const call = /createRequire\(import\.meta\.url\)\(\s*(['"])([^'"]+\.json)\1\s*\)/g;
  return {
    name: 'nearveil:inline-required-json',
    transform(code, id) {
      if (!id.endsWith('.ts') || !call.test(code)) return null;
      const imports: string[] = [];
      const out = code.replace(call, (_all, _quote, spec: string) => {
        imports.push(`import __requiredJson${imports.length} from ${JSON.stringify(spec)};`);
        return `__requiredJson${imports.length - 1}`;
      });
      return { code: imports.join('\n') + '\n' + out, map: null };
    },
  };
}

type Output = Array<Rolldown.OutputChunk | Rolldown.OutputAsset>;
const outputs = (result: Awaited<ReturnType<typeof build>>): Output => (Array.isArray(result) ? result.flatMap((r) => r.output) : [...(result as Rolldown.RolldownOutput).output]);

/** Resolves the package's dependencies as the checkout installed them, wherever dist was written. */
function dependenciesFromCheckout(): Plugin {
  return {
    name: 'nearveil:dependencies-from-checkout',
    enforce: 'pre',
    resolveId(source) {
      return isDependency(source) ? this.resolve(source, join(ROOT, 'package.json'), { skipSelf: true }) : null;
    },
  };
}

/** The npm packages whose code ended up in these chunks (by the node_modules folder of each module). */
function bundledPackages(output: Output): Set<string> {
  const names = new Set<string>();
  for (const chunk of output) {
    if (chunk.type !== 'chunk') continue;
    for (const id of chunk.moduleIds) {
      const match = /node_modules\/((?:@[^/]+\/)?[^/]+)\//.exec(id.replaceAll('\\', '/'));
      if (match) names.add(match[1]!);
    }
  }
  return names;
}

async function buildBrowserEntries(): Promise<Output> {
  const result = await build({
    configFile: false,
    logLevel: 'warn',
    root: ROOT,
    publicDir: false,
    plugins: [refuseNodeModules('the client package')],
    build: {
      outDir: dist,
      emptyOutDir: false,
      target: 'es2022',
      minify: false,
      lib: { entry: { index: join(ROOT, 'sdk', 'browser.ts'), admin: join(ROOT, 'sdk', 'admin.ts') }, formats: ['es'], fileName: (_format, name) => `${name}.js` },
      rolldownOptions: { external: isDependency, output: { chunkFileNames: 'chunks/[name]-[hash].js' } },
    },
  });
  return outputs(result);
}

async function buildCli(): Promise<Output> {
  const outDir = join(dist, 'cli');
  const result = await build({
    configFile: false,
    logLevel: 'warn',
    root: ROOT,
    publicDir: false,
    plugins: [cliEntry(), inlineRequiredJson()],
    ssr: { noExternal: true, external: dependencies, target: 'node' },
    build: {
      ssr: true,
      outDir,
      emptyOutDir: false,
      target: 'node20',
      minify: false,
      // Chunks stay beside the entry: the CLI finds package.json two folders up from its own file.
      rolldownOptions: { input: 'nearveil-cli-entry', external: isDependency, output: { format: 'es', entryFileNames: 'nearveil.js', chunkFileNames: '[name]-[hash].js', banner: (chunk) => (chunk.isEntry ? '#!/usr/bin/env node' : '') } },
    },
  });
  const output = outputs(result);
  for (const chunk of output) {
    if (chunk.type === 'chunk' && /createRequire\(/.test(chunk.code)) throw new Error(`dist/cli/${chunk.fileName} still reads a file with createRequire at run time; bundle it (inlineRequiredJson)`);
  }
  chmodSync(join(outDir, 'nearveil.js'), 0o755);
  return output;
}

/** Declarations with tsc (packages/client/tsconfig.types.json), import paths rewritten from .ts to .js. */
function buildDeclarations(): void {
  const config = join(ROOT, 'packages', 'client', 'tsconfig.types.json');
  const tsc = spawnSync(process.execPath, [join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', config, '--outDir', join(dist, 'types')], { cwd: ROOT, encoding: 'utf8' });
  if (tsc.status !== 0) throw new Error(`tsc (declarations) failed:\n${tsc.stdout}${tsc.stderr}`);
  // tsc keeps the sources' ".ts" specifiers in .d.ts files; consumers resolve "./x.js" to "./x.d.ts" under every module resolution.
  const relativeTs = /((?:from|import)\s*\(?\s*)(['"])(\.{1,2}\/[^'"]+)\.ts\2/g;
  for (const file of filesUnder(join(dist, 'types'))) {
    if (!file.endsWith('.d.ts')) continue;
    const text = readFileSync(file, 'utf8');
    const rewritten = text.replace(relativeTs, (_all, head: string, quote: string, path: string) => `${head}${quote}${path}.js${quote}`);
    if (rewritten !== text) writeFileSync(file, rewritten);
  }
}

function filesUnder(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? filesUnder(join(dir, e.name)) : [join(dir, e.name)]));
}

/** One notices file: for each npm package bundled into dist, its licence file as it ships. */
function writeNotices(packages: Set<string>): void {
  const sections = [...packages].sort().map((name) => {
    const folder = join(ROOT, 'node_modules', name);
    const licence = readdirSync(folder).find((f) => /^licen[cs]e/i.test(f));
    const meta = JSON.parse(readFileSync(join(folder, 'package.json'), 'utf8')) as { version: string; license?: string; repository?: string | { url?: string } };
    const repository = typeof meta.repository === 'string' ? meta.repository : (meta.repository?.url ?? 'its npm page');
    // Some packages ship no licence file: their package.json names the licence (SPDX) and where its text lives.
    const text = licence ? readFileSync(join(folder, licence), 'utf8').trim() : `Licence: ${meta.license ?? 'not stated'} (the package ships no licence file; the full text is in ${repository}).`;
    return `== ${name}@${meta.version} ==\n\n${text}\n`;
  });
  writeFileSync(join(dist, 'THIRD-PARTY-NOTICES.txt'), `npm packages bundled into this package's dist files, with their licences.\n\n${sections.join('\n')}`);
}

/**
 * What the client weighs in an app: a tiny page importing connect and the IndexedDB key store is
 * bundled by vite for browsers (minified, dependencies included, any node: import refused) and
 * its scripts gzipped with node:zlib at the default level (vite's module-preload polyfill is the
 * app's, not the client's, so it is left out).
 */
async function browserBundleSize(entry: string): Promise<{ minBytes: number; gzipBytes: number }> {
  const app = mkdtempSync(join(tmpdir(), 'nearveil-client-size-'));
  try {
    writeFileSync(join(app, 'index.html'), '<!doctype html><title>size</title><script type="module" src="./main.js"></script>\n');
    writeFileSync(
      join(app, 'main.js'),
      `import { connect, indexedDbKeyStore } from ${JSON.stringify(entry)};\n` +
        `const client = connect({ endpoint: location.origin, apiKey: 'k', keyStore: indexedDbKeyStore() });\n` +
        `client.nearest('d', { lat: 0, lon: 0 }).then((r) => { document.title = r.results[0].id; });\n`,
    );
    const result = await build({ configFile: false, logLevel: 'warn', root: app, publicDir: false, plugins: [refuseNodeModules('a browser bundle of the client'), dependenciesFromCheckout()], build: { outDir: join(app, 'out'), target: 'es2022', minify: true, modulePreload: { polyfill: false } } });
    const scripts = outputs(result).filter((o): o is Rolldown.OutputChunk => o.type === 'chunk');
    const code = scripts.map((c) => c.code).join('\n');
    return { minBytes: Buffer.byteLength(code), gzipBytes: gzipSync(code).length };
  } finally {
    rmSync(app, { recursive: true, force: true });
  }
}

async function main(): Promise<void> {
  rmSync(dist, { recursive: true, force: true });
  mkdirSync(dist, { recursive: true });
  const browser = await buildBrowserEntries();
  const cli = await buildCli();
  buildDeclarations();
  writeNotices(new Set([...bundledPackages(browser), ...bundledPackages(cli)].filter((name) => !isDependency(name))));
  const size = await browserBundleSize(join(dist, 'index.js'));
  const kb = (bytes: number) => `${(bytes / 1024).toFixed(1)} KB`;
  for (const file of filesUnder(dist).filter((f) => f.endsWith('.js'))) console.log(`${relative(packageDir, file).padEnd(40)} ${kb(statSync(file).size)}`);
  console.log(`browser client in an app (vite, minified, zod and @noble/hashes included): ${kb(size.minBytes)} min, ${kb(size.gzipBytes)} min+gzip (target ${kb(BROWSER_BUDGET_BYTES)})`);
  if (size.gzipBytes > BROWSER_BUDGET_BYTES) console.warn(`warning: the browser client is over its ${kb(BROWSER_BUDGET_BYTES)} target`);
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
