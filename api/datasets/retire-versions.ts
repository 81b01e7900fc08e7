import { and, eq, inArray, isNotNull, lt, lte } from 'drizzle-orm';
import { database, type Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';

/** A blob written this recently is never collected: a build may be about to point a version at it. */
const FRESH_BLOB_SECONDS = 3600;
/** A build that wrote no progress for this long died without its queue noticing (Workers stop at 15 min). */
const STALE_BUILD_SECONDS = 30 * 60;

export interface SweepReport {
  retired: Array<{ datasetId: string; version: number }>;
  deletedBlobs: string[];
  failedBuilds: Array<{ datasetId: string; version: number }>;
}

/**
 * The periodic sweep (scheduled() and after each publish): versions whose grace has passed turn
 * "retired" and their manifests and no-longer-referenced matrices are deleted; builds that
 * stopped reporting progress are marked failed. `now` is a parameter so tests can jump ahead.
 * Site tables are kept: they are the version's content, and a retired version can be built again.
 */
export async function sweepVersions(env: Env, now = new Date()): Promise<SweepReport> {
  const db = database(env);
  const retired = await db
    .update(versions)
    .set({ state: 'retired', retiredAt: now.toISOString() })
    .where(and(eq(versions.state, 'ready'), isNotNull(versions.servedUntil), lte(versions.servedUntil, now.toISOString())))
    .returning();
  const deletedBlobs: string[] = [];
  for (const v of retired) {
    if (v.manifestKey) {
      await env.BLOBS.delete(v.manifestKey);
      deletedBlobs.push(v.manifestKey);
    }
    if (v.matrixKey && (await collectMatrix(env, db, v.matrixKey, now))) deletedBlobs.push(v.matrixKey);
  }
  const staleBefore = new Date(now.getTime() - STALE_BUILD_SECONDS * 1000).toISOString();
  const failedBuilds = await db
    .update(versions)
    .set({ state: 'failed', error: `build interrupted: no progress for ${STALE_BUILD_SECONDS / 60} minutes` })
    .where(and(eq(versions.state, 'building'), lt(versions.progressAt, staleBefore)))
    .returning({ datasetId: versions.datasetId, version: versions.number });
  return { retired: retired.map((v) => ({ datasetId: v.datasetId, version: v.number })), deletedBlobs, failedBuilds };
}

/**
 * Deletes a content-addressed matrix once no version that can still answer or be published
 * (building, ready, active) points at it, and it was not written within the last hour. Two
 * versions with the same content share one matrix, so the last one retired frees it.
 */
async function collectMatrix(env: Env, db: Database, key: string, now: Date): Promise<boolean> {
  const users = await db
    .select({ number: versions.number })
    .from(versions)
    .where(and(eq(versions.matrixKey, key), inArray(versions.state, ['building', 'ready', 'active'])))
    .limit(1);
  if (users.length > 0) return false;
  const head = await env.BLOBS.head(key);
  if (head === null) return false;
  if (now.getTime() - head.uploaded.getTime() < FRESH_BLOB_SECONDS * 1000) return false;
  await env.BLOBS.delete(key);
  return true;
}
