import { and, eq, inArray, or } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { blobKeys, getBlobText } from '../storage/blobs.ts';

/** A blob written this recently is never collected: a build may be about to point a version at it. */
export const FRESH_BLOB_SECONDS = 3600;

/** What one attempt to delete a blob came to: deleted now, absent already, or kept because it is fresh. */
export type Collected = 'deleted' | 'absent' | 'fresh';

/**
 * The details matrix and sealed file a manifest names. They are the version's own: their keys
 * come from its per-version secret, so no other version can share them.
 */
export async function detailsBlobsNamedBy(env: Env, manifestKey: string): Promise<string[]> {
  const text = await getBlobText(env, manifestKey);
  if (text === null) return [];
  const m = JSON.parse(text) as { details?: { sealedHash: string; matrix: { contentHash: string } } };
  return m.details ? [blobKeys.matrix(m.details.matrix.contentHash), blobKeys.sealed(m.details.sealedHash)] : [];
}

/**
 * Deletes a content-addressed matrix (cell or partition) once no version that can still answer
 * or be published (building, ready, active) points at it either way. Versions with the same
 * content share one blob, so the last one retired frees it; 'shared' when one still uses it.
 */
export async function collectMatrix(env: Env, db: Database, key: string, now: Date): Promise<Collected | 'shared'> {
  const users = await db
    .select({ number: versions.number })
    .from(versions)
    .where(and(or(eq(versions.matrixKey, key), eq(versions.partitionKey, key)), inArray(versions.state, ['building', 'ready', 'active'])))
    .limit(1);
  if (users.length > 0) return 'shared';
  return deleteUnlessFresh(env, key, now);
}

/** Deletes a blob unless it is gone already or was written within the last hour (a build may be about to use it). */
export async function deleteUnlessFresh(env: Env, key: string, now: Date): Promise<Collected> {
  const head = await env.BLOBS.head(key);
  if (head === null) return 'absent';
  if (now.getTime() - head.uploaded.getTime() < FRESH_BLOB_SECONDS * 1000) return 'fresh';
  await env.BLOBS.delete(key);
  return 'deleted';
}
