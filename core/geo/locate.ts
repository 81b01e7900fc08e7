import { gridRegion } from './grid.ts';
import { kdRegion } from './kd-layout.ts';
import type { Manifest } from './manifest.ts';

/** Where a point's candidate list lives: its region, the matrix column, and rows in it. */
export interface RegionLocation {
  region: number;
  column: number;
  rowStart: number;
  rowCount: number;
}

/**
 * The region holding (lat, lon) and its place in the cell matrix. Runs on the client only: the
 * position never leaves it; only `column` is asked for, hidden in a query.
 * Requires a manifest that passed ManifestSchema. Throws RangeError for lat outside [-90, 90] or
 * lon outside [-180, 180] (or not finite).
 */
export function locateRegion(manifest: Manifest, lat: number, lon: number): RegionLocation {
  if (typeof lat !== 'number' || !(lat >= -90 && lat <= 90)) {
    throw new RangeError(`locateRegion: expected lat in [-90, 90], got ${lat}`);
  }
  if (typeof lon !== 'number' || !(lon >= -180 && lon <= 180)) {
    throw new RangeError(`locateRegion: expected lon in [-180, 180], got ${lon}`);
  }
  const layout = manifest.layout;
  const region = layout.kind === 'grid' ? gridRegion(layout, lat, lon) : kdRegion(layout, lat, lon);
  const { regionsPerColumn } = manifest.matrix;
  const rowCount = manifest.record.regionBits;
  return {
    region,
    column: Math.floor(region / regionsPerColumn),
    rowStart: (region % regionsPerColumn) * rowCount,
    rowCount,
  };
}
