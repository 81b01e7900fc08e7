import { and, eq, gte } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { collectMatrix, deleteUnlessFresh, detailsBlobsNamedBy, type Collected } from './collect-blobs.ts';

/**
 * How long after its retirement a version's blobs are looked for again. A blob still fresh when
 * its version retired (written within the hour) is an hour old within the hour; a day leaves
 * room for cron runs that did not happen.
 */
const REVISIT_RETIRED_SECONDS = 24 * 3600;

/**
 * Deletes the blobs of the versions retired within the last day: those this sweep retired, and
 * those an earlier sweep had to leave because a blob was fresh. Details matrix and sealed file
 * first; the manifest, which names them, only once none of them is left; cell and partition
 * matrices once no answering version shares them. Returns the keys deleted now.
 */
export async function collectRetiredVersions(env: Env, db: Database, now: Date): Promise<string[]> {
  const since = new Date(now.getTime() - REVISIT_RETIRED_SECONDS * 1000).toISOString();
  const recent = await db
    .select()
    .from(versions)
    .where(and(eq(versions.state, 'retired'), gte(versions.retiredAt, since)));
  const deleted: string[] = [];
  for (const v of recent) {
    let fresh = false;
    const note = (key: string, result: Collected | 'shared') => {
      if (result === 'deleted') deleted.push(key);
      if (result === 'fresh') fresh = true;
    };
    for (const key of v.manifestKey ? await detailsBlobsNamedBy(env, v.manifestKey) : []) note(key, await deleteUnlessFresh(env, key, now));
    if (v.manifestKey && !fresh) note(v.manifestKey, await deleteUnlessFresh(env, v.manifestKey, now));
    for (const key of [v.matrixKey, v.partitionKey]) if (key) note(key, await collectMatrix(env, db, key, now));
  }
  return deleted;
}
