import { drizzle } from 'drizzle-orm/d1';
import type { Env } from '../env.ts';
import * as schema from './schema.ts';

export function database(env: Env) {
  return drizzle(env.DB, { schema });
}

export type Database = ReturnType<typeof database>;
