import { siteBox, widestLongitudeGap } from '../geo/bounding-box.ts';
import type { GridLayout } from '../geo/grid.ts';
import { buildKdLayout } from '../geo/kd-layout.ts';
import type { Layout } from '../geo/manifest.ts';
import { choosePacking, type Packing } from '../geo/packing.ts';
import { gridCandidateLists } from '../geo/region-lists.ts';
import type { SitePoints } from '../geo/site-points.ts';
import { shapeCost, type ShapeCost } from './cost-model.ts';
import { gridShape } from './grid-shape.ts';

/** Grid cells tried, as shares of the site count (plus at least one cell). */
export const CELLS_PER_SITE_TRIED = [1 / 32, 1 / 16, 1 / 8, 1 / 4, 1 / 2, 1] as const;
/** Longest candidate list the adaptive layout aims for (large tables try twice this only: it builds faster). */
export const ADAPTIVE_TARGET = 8;

/** 'grid' discloses only a box around all sites; 'adaptive' discloses where sites are dense. */
export type LayoutChoice = 'auto' | 'grid' | 'adaptive';

export interface LayoutCandidate {
  readonly label: string;
  readonly layout: Layout;
  readonly lists: Int32Array[];
  readonly slotsPerRegion: number;
  readonly packing: Packing;
  /** One query's cost by the cost model, with plain products estimated from the lists. */
  readonly cost: ShapeCost;
}

/**
 * Builds candidate lists for a handful of layouts and keeps the one whose query costs least by
 * the cost model (cost-model.ts). Uniform grids: a coarse grid has few regions but long padded
 * lists, a fine grid many columns and sites repeated in many lists. Adaptive (kd) layouts keep
 * every list short where sites are dense. `siteOnes[s]` is the 1-bits of site s's slot.
 * Deterministic: same input, same choice.
 */
export function chooseLayout(
  points: SitePoints,
  slotBits: number,
  siteOnes: Int32Array,
  choice: LayoutChoice = 'auto',
): { chosen: LayoutCandidate; tried: LayoutCandidate[] } {
  const n = points.lats.length;
  const tried: LayoutCandidate[] = [];
  const weigh = (label: string, layout: Layout, lists: Int32Array[]) => {
    const slotsPerRegion = Math.max(1, ...lists.map((l) => l.length));
    const regionBits = slotsPerRegion * slotBits;
    let ones = 0;
    for (const list of lists) for (const s of list) ones += siteOnes[s]!;
    const costOf = (p: Packing) => shapeCost(p.rows, p.columns, ones + 2 * p.rows, regionBits).seconds.total;
    const pack = choosePacking(lists.length, regionBits, costOf);
    tried.push({ label, layout, lists, slotsPerRegion, packing: pack, cost: shapeCost(pack.rows, pack.columns, ones + 2 * pack.rows, regionBits) });
  };
  if (choice !== 'adaptive') {
    const box = siteBox(points.lats, points.lons);
    const seen = new Set<string>();
    for (const share of CELLS_PER_SITE_TRIED) {
      const { rows, cols } = gridShape(box, Math.max(1, Math.round(n * share)));
      if (seen.has(`${rows}x${cols}`)) continue;
      seen.add(`${rows}x${cols}`);
      const layout: GridLayout = { kind: 'grid', ...box, rows, cols };
      weigh(`grid ${rows} x ${cols}`, layout, gridCandidateLists(points, layout));
    }
  }
  if (choice !== 'grid') {
    const { start, gap } = widestLongitudeGap(points.lons);
    const seam = start - gap / 2;
    for (const target of n <= 5000 ? [ADAPTIVE_TARGET, 2 * ADAPTIVE_TARGET] : [2 * ADAPTIVE_TARGET]) {
      const { layout, lists } = buildKdLayout(points, seam, target);
      weigh(`adaptive, lists <= ${target}`, layout, lists);
    }
  }
  const chosen = tried.reduce((best, c) => (c.cost.seconds.total < best.cost.seconds.total ? c : best));
  return { chosen, tried };
}
