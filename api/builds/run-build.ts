import { and, eq } from 'drizzle-orm';
import { buildFromColumns } from '../../core/build/build-version.ts';
import { siteColumnSteps, type SiteColumns } from '../../core/build/site-columns.ts';
import { runStepsPaused } from '../../core/steps/steps.ts';
import { explainChoice, type LayoutChoice } from '../../core/build/choose-layout.ts';
import type { Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import type { DatasetRow, VersionRow } from '../datasets/repository.ts';
import { versionDetailsSecret } from '../datasets/details-secret.ts';
import { blobKeys, getBlobText, putBlob } from '../storage/blobs.ts';
import { isolatePause } from './isolate-pause.ts';
import { progressWriter, writeProgress, type BuildStage } from './progress.ts';

/** Lets a test stop a build at a stage, as if its Worker had died there. */
export interface BuildHooks {
  onStage?: (stage: BuildStage) => void | Promise<void>;
}

/** What the stored matrix looks like, kept on the version row for listings. */
export interface BuildSummary {
  layout: 'grid' | 'kd' | 'veiled';
  rows: number;
  columns: number;
  ones: number;
  products: number;
  /** k nearest the matrix serves (1 unless the build asked for more). */
  maxK: number;
  /** Why this layout (explainChoice): its cost per query and what became of the others weighed. */
  layoutReason?: string;
}

/**
 * Turns a version in "building" into a stored cell matrix and manifest. Order matters: the
 * matrix blob is written first (content-addressed, so a rewrite of the same bytes is harmless
 * and a half-finished build never clobbers a live blob), then the manifest, and only then does
 * the row say "ready". Throws on any failure and leaves the row to the caller (retry or fail);
 * nothing here touches another version or the dataset's active pointer.
 */
export async function runBuild(env: Env, db: Database, dataset: DatasetRow, version: VersionRow, layout: LayoutChoice, maxK: number, hooks: BuildHooks = {}): Promise<BuildSummary> {
  const stage = async (name: BuildStage) => {
    await writeProgress(db, dataset.id, version.number, name);
    await hooks.onStage?.(name);
  };
  await stage('reading');
  // Columns, not Site objects, and the text let go of once read: a 100,000-site table fits an
  // isolate's 128 MB with room to spare (test/core/build/isolate-memory.test.ts).
  const pause = isolatePause();
  const sites = await siteColumnsOf(env, version.tableKey, pause);
  await stage('building');
  const detailsSecret = await versionDetailsSecret(db, version);
  const built = await buildFromColumns(
    sites,
    { dataset: dataset.slug, version: version.number, layout, maxK, detailsSecret },
    {
      onProgress: progressWriter(db, dataset.id, version.number),
      pause,
      // Stored as soon as they are sealed (content-addressed, like the matrix): not held through the layout.
      storeDetails: async (blobs) => {
        await putBlob(env, blobKeys.matrix(blobs.matrixHash), blobs.matrixBlob);
        await putBlob(env, blobKeys.sealed(blobs.sealedHash), blobs.sealedFile);
      },
    },
  );
  await stage('writing-matrix');
  const matrixKey = blobKeys.matrix(built.manifest.contentHash);
  await putBlob(env, matrixKey, built.matrixBlob);
  // A veiled layout's partition matrix: content-addressed like the cell matrix; the manifest names its hash.
  const partitionKey = built.partition && built.manifest.partition ? blobKeys.matrix(built.manifest.partition.contentHash) : null;
  if (partitionKey) await putBlob(env, partitionKey, built.partition!.blob);
  await stage('writing-manifest');
  const manifestKey = blobKeys.manifest(dataset.id, version.number);
  await putBlob(env, manifestKey, JSON.stringify(built.manifest));
  const m = built.manifest.matrix;
  const summary: BuildSummary = { layout: built.manifest.layout.kind, rows: m.rows, columns: m.columns, ones: m.ones, products: m.plan.products, maxK: built.manifest.maxK, layoutReason: explainChoice(built.layoutsTried) };
  const done = await db
    .update(versions)
    .set({
      state: 'ready',
      matrixKey,
      partitionKey,
      manifestKey,
      contentHash: built.manifest.contentHash,
      summary: JSON.stringify(summary),
      builtAt: new Date().toISOString(),
      error: null,
      progressStage: 'done',
      progressPercent: 100,
      progressAt: new Date().toISOString(),
    })
    .where(and(eq(versions.datasetId, dataset.id), eq(versions.number, version.number), eq(versions.state, 'building')))
    .returning({ number: versions.number });
  if (done.length === 0) throw new Error(`version ${version.number} left "building" while it was built (a stale delivery); not marked ready`);
  return summary;
}

/** The version's site table, read into columns (its text is dropped as soon as they are made). */
async function siteColumnsOf(env: Env, tableKey: string, pause: () => Promise<void> | undefined): Promise<SiteColumns> {
  const csv = await getBlobText(env, tableKey);
  if (csv === null) throw new Error(`site table blob ${tableKey} is missing`);
  return runStepsPaused(siteColumnSteps(csv), pause);
}

export async function sha256Hex(bytes: Uint8Array<ArrayBuffer>): Promise<string> {
  return [...new Uint8Array(await crypto.subtle.digest('SHA-256', bytes))].map((b) => b.toString(16).padStart(2, '0')).join('');
}
