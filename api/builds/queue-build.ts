import { and, eq, inArray, ne } from 'drizzle-orm';
import type { LayoutChoice } from '../../core/build/choose-layout.ts';
import type { Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import type { DatasetRow, VersionRow } from '../datasets/repository.ts';
import type { BuildMessage } from './build-message.ts';

/** States a build may start from: a new upload, a failed build, or a retired version to serve again. */
const BUILDABLE = ['draft', 'failed', 'retired'] as const;

/**
 * Marks the version "building" (stage "queued") and puts a build message on the queue. If the
 * queue refuses the message the version is marked failed with the reason, never left hanging.
 */
export async function queueBuild(env: Env, db: Database, dataset: DatasetRow, version: VersionRow, layout: LayoutChoice, maxK = 1): Promise<void> {
  await markQueued(db, dataset, version, layout, maxK);
  const message: BuildMessage = { datasetId: dataset.id, version: version.number, layout, maxK };
  try {
    await env.BUILDS.send(message);
  } catch (err) {
    const reason = `the build could not be queued: ${err instanceof Error ? err.message : String(err)}`;
    await db
      .update(versions)
      .set({ state: 'failed', error: reason })
      .where(and(eq(versions.datasetId, dataset.id), eq(versions.number, version.number), eq(versions.state, 'building')));
    throw new ApiError(503, 'build_not_queued', `${reason}; try again`, 'version');
  }
}

/** The state change alone (tests use it to drive the queue consumer by hand). */
export async function markQueued(db: Database, dataset: DatasetRow, version: VersionRow, layout: LayoutChoice, maxK = 1): Promise<void> {
  const now = new Date().toISOString();
  const moved = await db
    .update(versions)
    .set({ state: 'building', layout, buildMaxK: maxK, error: null, buildAttempts: 0, progressStage: 'queued', progressPercent: 0, progressAt: now, retiredAt: null })
    .where(and(eq(versions.datasetId, dataset.id), eq(versions.number, version.number), inArray(versions.state, [...BUILDABLE])))
    .returning({ number: versions.number });
  if (moved.length === 0) {
    throw new ApiError(409, 'version_state', `version ${version.number} is ${version.state}; only a draft, failed or retired version can be built`, 'version');
  }
}

/**
 * A build whose heartbeat stopped (progress is written at least every 5 s while one runs) lost
 * its Worker: a local restart drops the queue's messages, a crash drops the run. Such a version is
 * put back on the queue once per silence: its stage turns "requeued" in a guarded statement, so two
 * readers cannot both resume it, and the consumer counts the run as one more attempt, so a build
 * that keeps dying ends "failed" after BUILD_ATTEMPTS. The heartbeat time is left alone: if no
 * consumer ever takes the message, the sweep's 30-minute rule still ends the build.
 * Called when a version is read (the CLI and the console poll it) and by the cron's sweep.
 */
export const SILENT_BUILD_MS = 60_000;

export async function resumeIfSilent(env: Env, db: Database, version: VersionRow, now = Date.now()): Promise<boolean> {
  if (version.state !== 'building' || version.progressAt === null || version.progressStage === 'requeued') return false;
  if (now - Date.parse(version.progressAt) < SILENT_BUILD_MS) return false;
  const resumed = await db
    .update(versions)
    .set({ progressStage: 'requeued', error: 'the build stopped reporting (its Worker restarted or died); queued again' })
    .where(and(eq(versions.datasetId, version.datasetId), eq(versions.number, version.number), eq(versions.state, 'building'), eq(versions.progressAt, version.progressAt), ne(versions.progressStage, 'requeued')))
    .returning({ number: versions.number });
  if (resumed.length === 0) return false;
  const layout = (version.layout ?? 'auto') as LayoutChoice;
  await env.BUILDS.send({ datasetId: version.datasetId, version: version.number, layout, maxK: version.buildMaxK ?? 1 } satisfies BuildMessage);
  return true;
}
