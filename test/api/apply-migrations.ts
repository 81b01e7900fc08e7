import { applyD1Migrations, env } from 'cloudflare:test';

// The same SQL files `wrangler d1 migrations apply` runs; applying twice is a no-op.
await applyD1Migrations(env.DB, env.TEST_MIGRATIONS);
