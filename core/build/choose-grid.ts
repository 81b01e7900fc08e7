import type { LatLonBox } from '../geo/bounding-box.ts';
import type { GridLayout } from '../geo/grid.ts';
import { choosePacking, type Packing } from '../geo/packing.ts';
import { gridCandidateLists } from '../geo/region-lists.ts';
import type { SitePoints } from '../geo/site-points.ts';
import { shapeCost, type ShapeCost } from './cost-model.ts';
import { gridShape } from './grid-shape.ts';

/** Cells tried, as shares of the site count (plus at least one cell). */
export const CELLS_PER_SITE_TRIED = [1 / 32, 1 / 16, 1 / 8, 1 / 4, 1 / 2, 1] as const;

export interface GridChoice {
  readonly layout: GridLayout;
  readonly lists: Int32Array[];
  readonly slotsPerRegion: number;
  readonly packing: Packing;
  /** One query's cost by the cost model, with plain products estimated from the lists. */
  readonly cost: ShapeCost;
}

/**
 * Builds candidate lists for a handful of grid sizes and keeps the one whose query costs least
 * by the cost model (cost-model.ts): bytes both ways, server products, client work. A coarse
 * grid has few regions but long padded lists (many rows to download and decode); a fine grid
 * has many columns to upload and repeats sites in many lists (more 1-bits to multiply).
 * `siteOnes[s]` is the number of 1-bits site s's slot holds. Deterministic: same input, same choice.
 */
export function chooseGrid(points: SitePoints, box: LatLonBox, slotBits: number, siteOnes: Int32Array): { chosen: GridChoice; tried: GridChoice[] } {
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
    const regionBits = slotsPerRegion * slotBits;
    let ones = 0;
    for (const list of lists) for (const s of list) ones += siteOnes[s]!;
    const costOf = (p: Packing) => shapeCost(p.rows, p.columns, ones + 2 * p.rows, regionBits).seconds.total;
    const pack = choosePacking(lists.length, regionBits, costOf);
    tried.push({ layout, lists, slotsPerRegion, packing: pack, cost: shapeCost(pack.rows, pack.columns, ones + 2 * pack.rows, regionBits) });
  }
  const chosen = tried.reduce((best, c) => (c.cost.seconds.total < best.cost.seconds.total ? c : best));
  return { chosen, tried };
}
