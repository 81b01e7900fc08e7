import { sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { usageDaily } from '../db/schema.ts';
import { utcDay } from './calendar.ts';

export interface AnsweredQuery {
  credentialId: string;
  datasetId: string;
  version: number;
  bytesIn: number;
  bytesOut: number;
  multiplications: number;
}

/** Counts one answered query with a single upsert, so concurrent queries never lose a count. */
export async function recordAnsweredQuery(db: Database, q: AnsweredQuery, now = new Date()): Promise<void> {
  const day = utcDay(now);
  await db
    .insert(usageDaily)
    .values({ ...q, day, queries: 1 })
    .onConflictDoUpdate({
      target: [usageDaily.credentialId, usageDaily.datasetId, usageDaily.version, usageDaily.day],
      set: {
        queries: sql`${usageDaily.queries} + 1`,
        bytesIn: sql`${usageDaily.bytesIn} + ${q.bytesIn}`,
        bytesOut: sql`${usageDaily.bytesOut} + ${q.bytesOut}`,
        multiplications: sql`${usageDaily.multiplications} + ${q.multiplications}`,
      },
    });
}

/**
 * Counts bytes served outside a query (the sealed file of a version's details) against the key,
 * dataset, version and day, with the same single upsert; it adds no query and no products.
 */
export async function recordDownload(db: Database, d: { credentialId: string; datasetId: string; version: number; bytesOut: number }, now = new Date()): Promise<void> {
  const day = utcDay(now);
  await db
    .insert(usageDaily)
    .values({ ...d, day, queries: 0, bytesIn: 0, multiplications: 0 })
    .onConflictDoUpdate({
      target: [usageDaily.credentialId, usageDaily.datasetId, usageDaily.version, usageDaily.day],
      set: { bytesOut: sql`${usageDaily.bytesOut} + ${d.bytesOut}` },
    });
}
