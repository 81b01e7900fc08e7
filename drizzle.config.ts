import { defineConfig } from 'drizzle-kit';

// `npx drizzle-kit generate` writes the SQL that `wrangler d1 migrations apply` runs.
export default defineConfig({
  dialect: 'sqlite',
  schema: './api/db/schema.ts',
  out: './migrations',
});
