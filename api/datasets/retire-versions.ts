import { and, eq, inArray, isNotNull, lt, lte } from 'drizzle-orm';
import { database, type Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { blobKeys, getBlobText } from '../storage/blobs.ts';

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
 * A retired version's details matrix and sealed file go with it; its partition matrix goes with its cell matrix.
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
    // The manifest names the version's other blobs, so it is read before it goes.
    const own = v.manifestKey ? await blobsNamedBy(env, v.manifestKey) : { perVersion: [], withMatrix: [] };
    for (const key of own.perVersion) if (await deleteUnlessFresh(env, key, now)) deletedBlobs.push(key);
    if (v.manifestKey) {
      await env.BLOBS.delete(v.manifestKey);
      deletedBlobs.push(v.manifestKey);
    }
    if (v.matrixKey) deletedBlobs.push(...(await collectMatrix(env, db, [v.matrixKey, ...own.withMatrix], now)));
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
 * The blobs a manifest names besides the cell matrix. The details matrix and sealed file are the
 * version's own (their keys come from its per-version secret); a veiled layout's partition matrix
 * follows from the same sites as the cell matrix, so it is shared exactly when that matrix is.
 */
async function blobsNamedBy(env: Env, manifestKey: string): Promise<{ perVersion: string[]; withMatrix: string[] }> {
  const text = await getBlobText(env, manifestKey);
  if (text === null) return { perVersion: [], withMatrix: [] };
  const m = JSON.parse(text) as { details?: { sealedHash: string; matrix: { contentHash: string } }; partition?: { contentHash: string } };
  return {
    perVersion: m.details ? [blobKeys.matrix(m.details.matrix.contentHash), blobKeys.sealed(m.details.sealedHash)] : [],
    withMatrix: m.partition ? [blobKeys.matrix(m.partition.contentHash)] : [],
  };
}

/**
 * Deletes a content-addressed cell matrix (and the blobs that go with it) once no version that can
 * still answer or be published (building, ready, active) points at it. Two versions with the same
 * content share one matrix, so the last one retired frees it. Returns the keys deleted.
 */
async function collectMatrix(env: Env, db: Database, keys: string[], now: Date): Promise<string[]> {
  const users = await db
    .select({ number: versions.number })
    .from(versions)
    .where(and(eq(versions.matrixKey, keys[0]!), inArray(versions.state, ['building', 'ready', 'active'])))
    .limit(1);
  if (users.length > 0) return [];
  const deleted: string[] = [];
  for (const key of keys) if (await deleteUnlessFresh(env, key, now)) deleted.push(key);
  return deleted;
}

/** Deletes a blob unless it is gone already or was written within the last hour (a build may be about to use it). */
async function deleteUnlessFresh(env: Env, key: string, now: Date): Promise<boolean> {
  const head = await env.BLOBS.head(key);
  if (head === null) return false;
  if (now.getTime() - head.uploaded.getTime() < FRESH_BLOB_SECONDS * 1000) return false;
  await env.BLOBS.delete(key);
  return true;
}
