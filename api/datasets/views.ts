import { LAYOUT_CHOICES, type LayoutChoice } from '../../core/build/choose-layout.ts';
import { LAYOUT_FLAG } from '../../core/build/layout-disclosure.ts';
import type { BuildSummary } from '../builds/run-build.ts';
import type { DatasetRow, VersionRow } from './repository.ts';

/** A dataset as the admin routes show it. */
export function datasetView(row: DatasetRow) {
  return { slug: row.slug, name: row.name, activeVersion: row.activeVersion, createdAt: row.createdAt };
}

/**
 * A version as the admin routes show it, field by field (the details secret never leaves D1).
 * Stored summaries name the adaptive layout by its manifest tag "kd"; people and the build's
 * `layout` parameter call it "adaptive", so the answer says "adaptive" too.
 */
export function versionView(row: VersionRow) {
  const summary = row.summary === null ? null : (JSON.parse(row.summary) as BuildSummary);
  return {
    version: row.number,
    state: row.state,
    siteCount: row.siteCount,
    author: row.createdBy,
    contentHash: row.contentHash,
    progress: row.state === 'building' && row.progressStage !== null ? { stage: row.progressStage, percent: row.progressPercent ?? 0 } : null,
    error: row.error,
    layout: summary === null ? null : LAYOUT_FLAG[summary.layout],
    layoutReason: summary?.layoutReason ?? null,
    requestedLayout: requestedLayout(row.layout),
    maxK: summary === null ? null : (summary.maxK ?? 1),
    matrix: summary === null ? null : { rows: summary.rows, columns: summary.columns, ones: summary.ones, products: summary.products },
    buildAttempts: row.buildAttempts,
    createdAt: row.createdAt,
    builtAt: row.builtAt,
    publishedAt: row.publishedAt,
    servedUntil: row.servedUntil,
    retiredAt: row.retiredAt,
  };
}

/** The layout the last build request asked for (auto lets the build choose); null before any build. */
function requestedLayout(stored: string | null): LayoutChoice | null {
  return stored !== null && (LAYOUT_CHOICES as readonly string[]).includes(stored) ? (stored as LayoutChoice) : null;
}
