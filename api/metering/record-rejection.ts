import { sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { rejectionsDaily } from '../db/schema.ts';
import { utcDay } from './calendar.ts';

export interface RejectedQuery {
  tenantId: string;
  credentialId: string;
  /** The dataset slug as the caller wrote it (it may not exist); cut to 100 characters. */
  datasetSlug: string;
  /** The refusal's machine code, for instance `quota_exceeded` or `value_jacobi`. */
  reason: string;
}

/** Counts one refused query with a single upsert (never billed, kept apart from usage_daily). */
export async function recordRejectedQuery(db: Database, q: RejectedQuery, now = new Date()): Promise<void> {
  const row = { ...q, datasetSlug: q.datasetSlug.slice(0, 100), reason: q.reason.slice(0, 64), day: utcDay(now), queries: 1 };
  await db
    .insert(rejectionsDaily)
    .values(row)
    .onConflictDoUpdate({
      target: [rejectionsDaily.credentialId, rejectionsDaily.datasetSlug, rejectionsDaily.day, rejectionsDaily.reason],
      set: { queries: sql`${rejectionsDaily.queries} + 1` },
    });
}
