import { gridRegion } from './grid.ts';
import { kdRegion } from './kd-layout.ts';
import type { Manifest } from './manifest.ts';
import { coarseCellOf, partitionRegion, type PartitionRecord } from './veiled-layout.ts';

/** Where a point's candidate list lives: its region, the matrix column, and rows in it. */
export interface RegionLocation {
  region: number;
  column: number;
  rowStart: number;
  rowCount: number;
}

/** Where a point's coarse cell record lives in the partition matrix (veiled layout only). */
export interface CellLocation {
  cell: number;
  column: number;
  rowStart: number;
  rowCount: number;
}

function checkPoint(fn: string, lat: number, lon: number): void {
  if (typeof lat !== 'number' || !(lat >= -90 && lat <= 90)) {
    throw new RangeError(`${fn}: expected lat in [-90, 90], got ${lat}`);
  }
  if (typeof lon !== 'number' || !(lon >= -180 && lon <= 180)) {
    throw new RangeError(`${fn}: expected lon in [-180, 180], got ${lon}`);
  }
}

/**
 * The region holding (lat, lon) and its place in the cell matrix. Runs on the client only: the
 * position never leaves it; only `column` is asked for, hidden in a query.
 * Requires a manifest that passed ManifestSchema; for a veiled layout also the record of the
 * point's coarse cell (readRecord of the rows locateCell names), fetched privately first.
 * Throws RangeError for lat outside [-90, 90] or lon outside [-180, 180] (or not finite), and
 * TypeError for a veiled layout without a record.
 */
export function locateRegion(manifest: Manifest, lat: number, lon: number, record?: PartitionRecord): RegionLocation {
  checkPoint('locateRegion', lat, lon);
  const layout = manifest.layout;
  let region: number;
  if (layout.kind === 'grid') region = gridRegion(layout, lat, lon);
  else if (layout.kind === 'kd') region = kdRegion(layout, lat, lon);
  else {
    if (!record) throw new TypeError('locateRegion: expected the coarse cell record of a veiled layout, got none');
    region = partitionRegion(layout, coarseCellOf(layout, lat, lon), record, lat, lon);
  }
  const { regionsPerColumn } = manifest.matrix;
  const rowCount = manifest.record.regionBits;
  return {
    region,
    column: Math.floor(region / regionsPerColumn),
    rowStart: (region % regionsPerColumn) * rowCount,
    rowCount,
  };
}

/**
 * The coarse cell holding (lat, lon) and where its record lives in the partition matrix: the
 * first private round of a veiled layout. Throws TypeError for other layouts, RangeError as
 * locateRegion for a bad point.
 */
export function locateCell(manifest: Manifest, lat: number, lon: number): CellLocation {
  checkPoint('locateCell', lat, lon);
  const layout = manifest.layout;
  if (layout.kind !== 'veiled' || !manifest.partition) {
    throw new TypeError(`locateCell: expected a veiled layout, got ${layout.kind}`);
  }
  const cell = coarseCellOf(layout, lat, lon);
  const { cellsPerColumn } = manifest.partition;
  return {
    cell,
    column: Math.floor(cell / cellsPerColumn),
    rowStart: (cell % cellsPerColumn) * layout.partitionBits,
    rowCount: layout.partitionBits,
  };
}
