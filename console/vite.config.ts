import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

// The console is plain TypeScript bundled into .console-build/console/, which wrangler serves as
// static assets at /console/ (wrangler.toml [assets]). Everything is bundled: no outside fonts,
// tiles or scripts, so it works offline on 127.0.0.1.
export default defineConfig({
  root: fileURLToPath(new URL('.', import.meta.url)),
  base: '/console/',
  publicDir: false,
  build: {
    outDir: fileURLToPath(new URL('../.console-build/console', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    sourcemap: true,
    assetsInlineLimit: 0,
  },
  worker: { format: 'es' },
});
