import { and, eq, inArray, isNotNull, isNull } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { datasets, versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { collectMatrix, deleteUnlessFresh, detailsBlobsNamedBy, type Collected } from './collect-blobs.ts';
import type { VersionRow } from './repository.ts';

export interface DeletedCollection {
  retired: VersionRow[];
  deletedBlobs: string[];
  collectedDatasets: string[];
}

/**
 * The sweep's part for deleted datasets (the delete itself removes no blob). Their versions that
 * could still answer turn "retired"; then every blob of every version goes: details, manifest,
 * cell and partition matrices no other answering version shares, and site tables no version of
 * a dataset still kept names. A blob written within the hour, or a version still building,
 * leaves the dataset for the next sweep; once nothing is left it is marked collected and its
 * details secrets are cleared (nothing sealed under them remains). The rows stay: usage and
 * statements point at them.
 */
export async function collectDeletedDatasets(env: Env, db: Database, now: Date): Promise<DeletedCollection> {
  const out: DeletedCollection = { retired: [], deletedBlobs: [], collectedDatasets: [] };
  const pending = await db.select().from(datasets).where(and(isNotNull(datasets.deletedAt), isNull(datasets.blobsCollectedAt)));
  for (const dataset of pending) {
    const retired = await db
      .update(versions)
      .set({ state: 'retired', retiredAt: now.toISOString(), servedUntil: null })
      .where(and(eq(versions.datasetId, dataset.id), inArray(versions.state, ['ready', 'active'])))
      .returning();
    out.retired.push(...retired);
    const all = await db.select().from(versions).where(eq(versions.datasetId, dataset.id));
    // A build still running writes blobs before it turns ready: wait for it to settle.
    let waiting = all.some((v) => v.state === 'building');
    for (const v of all) {
      if (v.state === 'building') continue;
      if (await collectVersion(env, db, v, now, out.deletedBlobs)) waiting = true;
    }
    if (waiting) continue;
    await db.batch([
      db.update(versions).set({ detailsSecret: null }).where(eq(versions.datasetId, dataset.id)),
      db.update(datasets).set({ blobsCollectedAt: now.toISOString() }).where(eq(datasets.id, dataset.id)),
    ]);
    out.collectedDatasets.push(dataset.id);
  }
  return out;
}

/** Deletes what one version of a deleted dataset left; true when something must wait for a later sweep. */
async function collectVersion(env: Env, db: Database, v: VersionRow, now: Date, deleted: string[]): Promise<boolean> {
  let waiting = false;
  const note = (key: string, result: Collected | 'shared') => {
    if (result === 'deleted') deleted.push(key);
    if (result === 'fresh') waiting = true;
  };
  // The manifest names the details blobs, so it goes last, and only once they are gone.
  for (const key of v.manifestKey ? await detailsBlobsNamedBy(env, v.manifestKey) : []) note(key, await deleteUnlessFresh(env, key, now));
  if (v.manifestKey && !waiting) note(v.manifestKey, await deleteUnlessFresh(env, v.manifestKey, now));
  for (const key of [v.matrixKey, v.partitionKey]) if (key) note(key, await collectMatrix(env, db, key, now));
  note(v.tableKey, await collectTable(env, db, v.tableKey, now));
  return waiting;
}

/** A site table is content-addressed: another dataset (not deleted) may hold the same bytes. */
async function collectTable(env: Env, db: Database, key: string, now: Date): Promise<Collected | 'shared'> {
  const users = await db
    .select({ number: versions.number })
    .from(versions)
    .innerJoin(datasets, eq(datasets.id, versions.datasetId))
    .where(and(eq(versions.tableKey, key), isNull(datasets.deletedAt)))
    .limit(1);
  if (users.length > 0) return 'shared';
  return deleteUnlessFresh(env, key, now);
}
