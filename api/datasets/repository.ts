import { and, desc, eq } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { datasets, versions } from '../db/schema.ts';
import { ApiError } from '../http/api-error.ts';

export type DatasetRow = typeof datasets.$inferSelect;
export type VersionRow = typeof versions.$inferSelect;

/** A dataset that may be worked with or queried: a deleted one is refused (404 dataset_deleted). */
export async function findDataset(db: Database, tenantId: string, slug: string): Promise<DatasetRow> {
  const row = await findDatasetWithHistory(db, tenantId, slug);
  if (row.deletedAt !== null) throw deletedDataset(row);
  return row;
}

/**
 * A dataset, deleted or not: for what stays readable after a delete (usage, statements). Slugs
 * are never reused, so a slug names one dataset for good.
 */
export async function findDatasetWithHistory(db: Database, tenantId: string, slug: string): Promise<DatasetRow> {
  const [row] = await db
    .select()
    .from(datasets)
    .where(and(eq(datasets.tenantId, tenantId), eq(datasets.slug, slug)))
    .limit(1);
  if (!row) throw new ApiError(404, 'dataset_unknown', `dataset "${slug}" does not exist for this tenant`, 'dataset');
  return row;
}

export function deletedDataset(row: DatasetRow): ApiError {
  return new ApiError(404, 'dataset_deleted', `dataset "${row.slug}" was deleted on ${row.deletedAt!.slice(0, 10)}; it answers no queries and its slug is not given to another dataset`, 'dataset');
}

export async function findVersion(db: Database, dataset: DatasetRow, number: number): Promise<VersionRow> {
  const [row] = await db
    .select()
    .from(versions)
    .where(and(eq(versions.datasetId, dataset.id), eq(versions.number, number)))
    .limit(1);
  if (!row) throw new ApiError(404, 'version_unknown', `dataset "${dataset.slug}" has no version ${number}`, 'version');
  return row;
}

export async function listVersions(db: Database, datasetId: string): Promise<VersionRow[]> {
  return db.select().from(versions).where(eq(versions.datasetId, datasetId)).orderBy(desc(versions.number));
}

/** Adds a draft version numbered one past the newest; retries if a concurrent upload took it. */
export async function insertDraftVersion(
  db: Database,
  datasetId: string,
  siteCount: number,
  tableKey: string,
  createdBy: string,
): Promise<number> {
  for (let attempt = 0; attempt < 5; attempt++) {
    const [newest] = await db
      .select({ number: versions.number })
      .from(versions)
      .where(eq(versions.datasetId, datasetId))
      .orderBy(desc(versions.number))
      .limit(1);
    const number = (newest?.number ?? 0) + 1;
    const inserted = await db
      .insert(versions)
      .values({ datasetId, number, state: 'draft', siteCount, tableKey, createdBy })
      .onConflictDoNothing()
      .returning({ number: versions.number });
    if (inserted.length === 1) return number;
  }
  throw new ApiError(409, 'version_conflict', 'too many concurrent uploads to this dataset; try again', 'version');
}

/** A version answers while active, and after that until its grace period ends (then it retires). */
export function isAnswerable(version: VersionRow, now = new Date()): boolean {
  if (version.state === 'active') return true;
  return version.state === 'ready' && version.servedUntil !== null && version.servedUntil > now.toISOString();
}
