import type { LatLonBox } from '../geo/bounding-box.ts';
import type { GridLayout } from '../geo/grid.ts';
import { choosePacking, type Packing } from '../geo/packing.ts';
import { gridCandidateLists } from '../geo/region-lists.ts';
import type { SitePoints } from '../geo/site-points.ts';
import { gridShape } from './grid-shape.ts';

/** Cells tried, as shares of the site count (plus at least one cell). */
export const CELLS_PER_SITE_TRIED = [1 / 32, 1 / 16, 1 / 8, 1 / 4, 1 / 2] as const;
/** A grid whose R + C is within this factor of the best one competes on matrix bits. */
export const TRANSFER_SLACK = 1.25;

export interface GridChoice {
  readonly layout: GridLayout;
  readonly lists: Int32Array[];
  readonly slotsPerRegion: number;
  readonly packing: Packing;
}

/**
 * Builds candidate lists for a handful of grid sizes and keeps one. Fewest matrix bits alone
 * would always pick the coarsest grid (one cell holding every site: a tiny matrix, but a region
 * as long as the whole table to download), so the choice is: among the grids whose R + C (bytes
 * up and down per query) is within TRANSFER_SLACK of the least, the one with fewest matrix bits
 * (server work); ties to fewer regions. Deterministic: same points, same choice.
 */
export function chooseGrid(points: SitePoints, box: LatLonBox, slotBits: number): GridChoice {
  const n = points.lats.length;
  const seen = new Set<string>();
  const tried: GridChoice[] = [];
  for (const share of CELLS_PER_SITE_TRIED) {
    const { rows, cols } = gridShape(box, Math.max(1, Math.round(n * share)));
    if (seen.has(`${rows}x${cols}`)) continue;
    seen.add(`${rows}x${cols}`);
    const layout: GridLayout = { kind: 'grid', ...box, rows, cols };
    const lists = gridCandidateLists(points, layout);
    const slotsPerRegion = Math.max(1, ...lists.map((l) => l.length));
    tried.push({ layout, lists, slotsPerRegion, packing: choosePacking(lists.length, slotsPerRegion * slotBits) });
  }
  const transfer = (c: GridChoice) => c.packing.rows + c.packing.columns;
  const bits = (c: GridChoice) => c.lists.length * c.slotsPerRegion;
  const least = Math.min(...tried.map(transfer));
  const eligible = tried.filter((c) => transfer(c) <= least * TRANSFER_SLACK);
  return eligible.reduce((best, c) => (bits(c) < bits(best) || (bits(c) === bits(best) && c.lists.length < best.lists.length) ? c : best));
}
