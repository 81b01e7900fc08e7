import { and, eq, inArray, ne, sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { datasets, versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import type { DatasetRow, VersionRow } from './repository.ts';

const DEFAULT_GRACE_SECONDS = 900;

/** How long a version that stopped being active still answers (VERSION_GRACE_SECONDS). */
export function graceSeconds(env: Env): number {
  const n = Number(env.VERSION_GRACE_SECONDS ?? DEFAULT_GRACE_SECONDS);
  return Number.isFinite(n) && n >= 0 ? n : DEFAULT_GRACE_SECONDS;
}

/**
 * Makes `target` the active version in one D1 batch (one transaction): the version active until
 * now turns "ready" and keeps answering until now + grace, the target turns "active", and the
 * dataset's pointer moves. Every statement is guarded by "the target is still ready or active"
 * inside the batch, so a version retired by a concurrent sweep can never leave the dataset with
 * no active version; readers see the old or the new pointer, never none or two.
 */
export async function activateVersion(env: Env, db: Database, dataset: DatasetRow, target: VersionRow, now = new Date()): Promise<{ activeVersion: number; previousVersion: number | null }> {
  if (target.state === 'retired') {
    throw new ApiError(409, 'version_retired', `version ${target.number} is retired and its matrix was collected; build it again first (POST .../versions/${target.number}/build), then publish`, 'version');
  }
  if (target.state !== 'ready' && target.state !== 'active') {
    throw new ApiError(409, 'version_state', `version ${target.number} is ${target.state}; only a built (ready) version can be published`, 'version');
  }
  const servedUntil = new Date(now.getTime() + graceSeconds(env) * 1000).toISOString();
  const targetEligible = sql`exists (select 1 from ${versions} where ${versions.datasetId} = ${dataset.id} and ${versions.number} = ${target.number} and ${versions.state} in ('ready', 'active'))`;
  const [demoted, promoted] = await db.batch([
    db
      .update(versions)
      .set({ state: 'ready', servedUntil })
      .where(and(eq(versions.datasetId, dataset.id), eq(versions.state, 'active'), ne(versions.number, target.number), targetEligible))
      .returning({ number: versions.number }),
    db
      .update(versions)
      .set({ state: 'active', servedUntil: null, publishedAt: sql`coalesce(${versions.publishedAt}, ${now.toISOString()})` })
      .where(and(eq(versions.datasetId, dataset.id), eq(versions.number, target.number), inArray(versions.state, ['ready', 'active'])))
      .returning({ number: versions.number }),
    db
      .update(datasets)
      .set({ activeVersion: target.number })
      .where(and(eq(datasets.id, dataset.id), sql`exists (select 1 from ${versions} where ${versions.datasetId} = ${dataset.id} and ${versions.number} = ${target.number} and ${versions.state} = 'active')`)),
  ]);
  if (promoted.length !== 1) {
    throw new ApiError(409, 'version_state', `version ${target.number} changed state while it was being published; nothing was switched`, 'version');
  }
  // The version this batch displaced (a concurrent publish may have displaced the one we read).
  return { activeVersion: target.number, previousVersion: demoted[0]?.number ?? (dataset.activeVersion === target.number ? target.number : null) };
}

/**
 * The version a rollback goes to when none is named: the newest version older than the active
 * one that was once published (so repeated rollbacks walk back one published version at a time).
 */
export function rollbackTarget(dataset: DatasetRow, all: readonly VersionRow[]): VersionRow {
  if (dataset.activeVersion === null) throw new ApiError(409, 'no_active_version', `dataset "${dataset.slug}" has no active version to roll back from`, 'dataset');
  const earlier = all
    .filter((v) => v.number < dataset.activeVersion! && v.publishedAt !== null)
    .sort((a, b) => b.number - a.number)[0];
  if (!earlier) throw new ApiError(409, 'no_earlier_version', `dataset "${dataset.slug}" has no version published before ${dataset.activeVersion}`, 'toVersion');
  return earlier;
}
