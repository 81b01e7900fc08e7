import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

// The finder page's script and stylesheet: src/main.ts bundled into .console-build/finder/ as
// exactly finder.js and finder.css (the Worker's page links these fixed names), which wrangler
// serves as static assets at /finder/ (wrangler.toml [assets]). Everything is bundled, one chunk:
// no outside fonts, tiles or scripts, so the page runs under default-src 'self'.
export default defineConfig({
  root: fileURLToPath(new URL('.', import.meta.url)),
  base: '/finder/',
  publicDir: false,
  build: {
    outDir: fileURLToPath(new URL('../.console-build/finder', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    sourcemap: true,
    assetsInlineLimit: 0,
    cssCodeSplit: false,
    modulePreload: { polyfill: false },
    rollupOptions: {
      input: fileURLToPath(new URL('./src/main.ts', import.meta.url)),
      output: {
        entryFileNames: 'finder.js',
        chunkFileNames: 'finder-[name].js',
        assetFileNames: (asset) => (asset.names.some((name) => name.endsWith('.css')) ? 'finder.css' : '[name][extname]'),
        codeSplitting: false,
      },
    },
  },
});
