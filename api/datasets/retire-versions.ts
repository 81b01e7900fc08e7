import { and, eq, isNotNull, isNull, lt, lte } from 'drizzle-orm';
import { database } from '../db/client.ts';
import { datasets, versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { resumeIfSilent } from '../builds/queue-build.ts';
import { collectRetiredVersions } from './collect-retired-versions.ts';
import { collectDeletedDatasets } from './collect-deleted-datasets.ts';

/** A build that wrote no progress for this long died without its queue noticing (Workers stop at 15 min). */
const STALE_BUILD_SECONDS = 30 * 60;

export interface SweepReport {
  retired: Array<{ datasetId: string; version: number }>;
  deletedBlobs: string[];
  failedBuilds: Array<{ datasetId: string; version: number }>;
  /** Deleted datasets whose every blob is now gone (the sweep skips them from then on). */
  collectedDatasets: string[];
}

/**
 * The periodic sweep (scheduled() and after each publish, rollback or delete): versions whose grace has passed turn
 * "retired" and their manifests and no-longer-referenced matrices are deleted; builds that
 * stopped reporting progress are marked failed. `now` is a parameter so tests can jump ahead.
 * A retired version's details matrix and sealed file go with it; its cell and partition matrices
 * once no answering version shares them; a blob written within the hour waits for a later sweep
 * (collect-retired-versions.ts visits versions retired in the last day).
 * Site tables are kept: they are the version's content, and a retired version can be built again.
 * Deleted datasets are collected whole, site tables too (collect-deleted-datasets.ts).
 */
export async function sweepVersions(env: Env, now = new Date()): Promise<SweepReport> {
  const db = database(env);
  const retired = await db
    .update(versions)
    .set({ state: 'retired', retiredAt: now.toISOString() })
    .where(and(eq(versions.state, 'ready'), isNotNull(versions.servedUntil), lte(versions.servedUntil, now.toISOString())))
    .returning();
  // Blobs still fresh (written within the hour) are left to a later sweep, which visits again.
  const deletedBlobs = await collectRetiredVersions(env, db, now);
  // Silent builds go back on the queue first; the 30-minute rule below is the last resort.
  // Not for deleted datasets: their builds would be thrown away (the 30-minute rule ends them).
  const building = await db
    .select({ version: versions })
    .from(versions)
    .innerJoin(datasets, eq(datasets.id, versions.datasetId))
    .where(and(eq(versions.state, 'building'), isNull(datasets.deletedAt)));
  for (const { version: silent } of building) await resumeIfSilent(env, db, silent, now.getTime());
  const staleBefore = new Date(now.getTime() - STALE_BUILD_SECONDS * 1000).toISOString();
  const failedBuilds = await db
    .update(versions)
    .set({ state: 'failed', error: `build interrupted: no progress for ${STALE_BUILD_SECONDS / 60} minutes` })
    .where(and(eq(versions.state, 'building'), lt(versions.progressAt, staleBefore)))
    .returning({ datasetId: versions.datasetId, version: versions.number });
  const deleted = await collectDeletedDatasets(env, db, now);
  return {
    retired: [...retired, ...deleted.retired].map((v) => ({ datasetId: v.datasetId, version: v.number })),
    deletedBlobs: [...deletedBlobs, ...deleted.deletedBlobs],
    failedBuilds,
    collectedDatasets: deleted.collectedDatasets,
  };
}

/** The sweep after a publish, rollback or delete: a failing sweep is logged, the next one catches up. */
export async function sweepQuietly(env: Env): Promise<void> {
  try {
    await sweepVersions(env);
  } catch (err) {
    console.error('nearveil: version sweep failed', err);
  }
}
