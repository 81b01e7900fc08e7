import { and, eq, inArray, isNotNull, lt, lte, or } from 'drizzle-orm';
import { database, type Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { blobKeys, getBlobText } from '../storage/blobs.ts';
import { resumeIfSilent } from '../builds/queue-build.ts';

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
 * A retired version's details matrix and sealed file go with it; its cell and partition matrices
 * once no live version shares them.
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
    // The manifest names the version's details blobs, so it is read before it goes.
    for (const key of v.manifestKey ? await detailsBlobsNamedBy(env, v.manifestKey) : []) {
      if (await deleteUnlessFresh(env, key, now)) deletedBlobs.push(key);
    }
    if (v.manifestKey) {
      await env.BLOBS.delete(v.manifestKey);
      deletedBlobs.push(v.manifestKey);
    }
    for (const key of [v.matrixKey, v.partitionKey]) {
      if (key && (await collectMatrix(env, db, key, now))) deletedBlobs.push(key);
    }
  }
  // Silent builds go back on the queue first; the 30-minute rule below is the last resort.
  for (const silent of await db.select().from(versions).where(eq(versions.state, 'building'))) await resumeIfSilent(env, db, silent, now.getTime());
  const staleBefore = new Date(now.getTime() - STALE_BUILD_SECONDS * 1000).toISOString();
  const failedBuilds = await db
    .update(versions)
    .set({ state: 'failed', error: `build interrupted: no progress for ${STALE_BUILD_SECONDS / 60} minutes` })
    .where(and(eq(versions.state, 'building'), lt(versions.progressAt, staleBefore)))
    .returning({ datasetId: versions.datasetId, version: versions.number });
  return { retired: retired.map((v) => ({ datasetId: v.datasetId, version: v.number })), deletedBlobs, failedBuilds };
}

/**
 * The details matrix and sealed file a manifest names. They are the version's own: their keys
 * come from its per-version secret, so no other version can share them.
 */
async function detailsBlobsNamedBy(env: Env, manifestKey: string): Promise<string[]> {
  const text = await getBlobText(env, manifestKey);
  if (text === null) return [];
  const m = JSON.parse(text) as { details?: { sealedHash: string; matrix: { contentHash: string } } };
  return m.details ? [blobKeys.matrix(m.details.matrix.contentHash), blobKeys.sealed(m.details.sealedHash)] : [];
}

/**
 * Deletes a content-addressed matrix (cell or partition) once no version that can still answer
 * or be published (building, ready, active) points at it either way. Versions with the same
 * content share one blob, so the last one retired frees it.
 */
async function collectMatrix(env: Env, db: Database, key: string, now: Date): Promise<boolean> {
  const users = await db
    .select({ number: versions.number })
    .from(versions)
    .where(and(or(eq(versions.matrixKey, key), eq(versions.partitionKey, key)), inArray(versions.state, ['building', 'ready', 'active'])))
    .limit(1);
  if (users.length > 0) return false;
  return deleteUnlessFresh(env, key, now);
}

/** Deletes a blob unless it is gone already or was written within the last hour (a build may be about to use it). */
async function deleteUnlessFresh(env: Env, key: string, now: Date): Promise<boolean> {
  const head = await env.BLOBS.head(key);
  if (head === null) return false;
  if (now.getTime() - head.uploaded.getTime() < FRESH_BLOB_SECONDS * 1000) return false;
  await env.BLOBS.delete(key);
  return true;
}
