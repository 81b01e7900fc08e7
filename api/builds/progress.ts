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

/**
 * Writes a building version's progress (stage, percent, heartbeat time). Only a row still in
 * "building" is touched, so a late write can never revive a failed or finished build.
 */
export async function writeProgress(db: Database, datasetId: string, number: number, stage: BuildStage, percent = BUILD_STAGES[stage]): Promise<void> {
  await db
    .update(versions)
    .set({ progressStage: stage, progressPercent: Math.max(0, Math.min(100, Math.round(percent))), progressAt: new Date().toISOString() })
    .where(and(eq(versions.datasetId, datasetId), eq(versions.number, number), eq(versions.state, 'building')));
}
