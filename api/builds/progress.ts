import { and, eq } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';

/** Build stages in order, with the percent of the whole build reached when each starts. */
export const BUILD_STAGES = {
  queued: 0,
  reading: 5,
  building: 10,
  'writing-matrix': 80,
  'writing-manifest': 95,
} as const;

export type BuildStage = keyof typeof BUILD_STAGES;

/** The build's own stages (core/build/build-version.ts), shown while "building" runs from 10% to 80%. */
export type BuildStep = BuildStage | 'details' | 'regions' | 'matrix' | 'plan' | 'hash' | 'done';

/** A heartbeat at least this often while a build runs, so a silent build is known to be dead. */
export const HEARTBEAT_MS = 5_000;

/**
 * The build's progress callback for buildFromColumns: writes the stage and overall percent when
 * the stage changes, the percent moves by a whole point, or HEARTBEAT_MS passed, never more often
 * than every 250 ms. The writes are awaited, so they also let other requests run.
 */
export function progressWriter(db: Database, datasetId: string, number: number): (p: { stage: BuildStep; percent: number }) => Promise<void> {
  let last = { stage: '', percent: -1, at: 0 };
  return async ({ stage, percent }) => {
    const overall = Math.floor(BUILD_STAGES.building + ((BUILD_STAGES['writing-matrix'] - BUILD_STAGES.building) * percent) / 100);
    const now = Date.now();
    const due = stage !== last.stage || overall > last.percent || now - last.at >= HEARTBEAT_MS;
    if (!due || now - last.at < 250) return;
    last = { stage, percent: overall, at: now };
    await writeProgress(db, datasetId, number, stage, overall);
  };
}

/**
 * Writes a building version's progress (stage, percent, heartbeat time). Only a row still in
 * "building" is touched, so a late write can never revive a failed or finished build.
 */
export async function writeProgress(db: Database, datasetId: string, number: number, stage: BuildStep, percent: number = BUILD_STAGES[stage as BuildStage] ?? 0): Promise<void> {
  await db
    .update(versions)
    .set({ progressStage: stage, progressPercent: Math.max(0, Math.min(100, Math.round(percent))), progressAt: new Date().toISOString() })
    .where(and(eq(versions.datasetId, datasetId), eq(versions.number, number), eq(versions.state, 'building')));
}
