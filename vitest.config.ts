import { defineConfig } from 'vitest/config';

// Node project: pure core modules, SDK and CLI. The workers project (routes inside workerd)
// is added in vitest.workers.ts and joined here.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'node',
          include: ['test/core/**/*.test.ts', 'test/sdk/**/*.test.ts'],
          environment: 'node',
          testTimeout: 120_000,
        },
      },
    ],
  },
});
