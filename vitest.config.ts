import { cloudflareTest, readD1Migrations } from '@cloudflare/vitest-pool-workers';
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const migrations = await readD1Migrations(fileURLToPath(new URL('./migrations', import.meta.url)));

// Two projects: "node" for pure core modules, the SDK and the CLI; "workers" runs the routes
// inside workerd with local D1 and R2, exactly as wrangler dev does.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'node',
          include: ['test/core/**/*.test.ts', 'test/sdk/**/*.test.ts', 'test/e2e/**/*.test.ts', 'test/reference/**/*.test.ts', 'test/console/**/*.test.ts', 'test/finder/**/*.test.ts'],
          environment: 'node',
          testTimeout: 180_000,
          hookTimeout: 180_000,
        },
      },
      {
        plugins: [
          cloudflareTest({
            wrangler: { configPath: './wrangler.toml' },
            // A low fan-out threshold, so the tests' mid-size datasets are answered by parts.
            miniflare: { bindings: { TEST_MIGRATIONS: migrations, FANOUT_PRODUCTS_PER_PART: '6000', BUILD_RETRY_DELAY_SECONDS: '0' } },
          }),
        ],
        test: {
          name: 'workers',
          include: ['test/api/**/*.test.ts'],
          setupFiles: ['./test/api/apply-migrations.ts'],
          testTimeout: 180_000,
          // scrypt pre-bundled into one module, as wrangler bundles it: through Vite's per-module
          // transform its calls into @noble/hashes/utils.js made a password hash 12 times slower
          // (5.6 s against 0.4 s). One entry only: two share a chunk and are slow again.
          deps: { optimizer: { ssr: { enabled: true, include: ['@noble/hashes/scrypt.js'] } } },
        },
      },
    ],
  },
});
