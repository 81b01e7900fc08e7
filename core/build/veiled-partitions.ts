import { buildCellPartition } from '../geo/cell-partition.ts';
import type { SitePoints } from '../geo/site-points.ts';
import {
  coarseCellBox,
  coarseCellCount,
  coarseCellOf,
  recordBits,
  wholeDegreeBox,
  type PartitionRecord,
  type VeiledLayout,
} from '../geo/veiled-layout.ts';
import { gridShape } from './grid-shape.ts';
import { runSteps, type Steps } from '../steps/steps.ts';

export interface VeiledPartitions {
  readonly layout: VeiledLayout;
  /** Candidate lists of every region, in region order (cell by cell, leaves in preorder). */
  readonly lists: Int32Array[];
  /** One record per coarse cell. */
  readonly records: PartitionRecord[];
  /** Leaves of the cell with the most: what a padded-per-cell layout would pad to. */
  readonly maxLeaves: number;
}

/**
 * Partitions every coarse cell of a `cells`-cell grid over the whole-degree box of the sites, and
 * numbers the regions cell by cell. The grid's shape depends only on the box and `cells`; the
 * records are padded to the longest (partitionBits). Deterministic.
 */
export function buildVeiledPartitions(points: SitePoints, cells: number, target: number, splitBits: number): VeiledPartitions {
  return runSteps(veiledPartitionSteps(points, cells, target, splitBits));
}

/** buildVeiledPartitions as steps (core/steps): a checkpoint after every coarse cell. */
export function* veiledPartitionSteps(points: SitePoints, cells: number, target: number, splitBits: number): Steps<VeiledPartitions> {
  const box = wholeDegreeBox(points.lats, points.lons);
  const shape = gridShape(box, cells);
  const grid = { ...box, ...shape };
  const count = coarseCellCount(grid);
  const inCell: number[][] = Array.from({ length: count }, () => []);
  for (let k = 0; k < points.sitesAt.length; k++) {
    const site = points.sitesAt[k]![0]!;
    inCell[coarseCellOf(grid, points.lats[site]!, points.lons[site]!)]!.push(k);
  }
  // Sites sharing one place are listed together, and three Voronoi cells meet at a vertex: boxes
  // around a vertex of the three largest groups cannot list fewer (as in kd-layout.ts).
  const groups = points.sitesAt.map((s) => s.length).sort((a, b) => b - a);
  const goal = Math.max(target, (groups[0] ?? 0) + (groups[1] ?? 0) + (groups[2] ?? 0));
  const lists: Int32Array[] = [];
  const trees: PartitionRecord[] = [];
  let maxLeaves = 0;
  for (let cell = 0; cell < count; cell++) {
    const part = buildCellPartition(points, coarseCellBox(grid, cell), grid.lonMin, Int32Array.from(inCell[cell]!), goal, splitBits);
    trees.push({ offset: lists.length, nodes: part.nodes });
    lists.push(...part.lists);
    maxLeaves = Math.max(maxLeaves, part.lists.length);
    yield (cell + 1) / count;
  }
  const regions = lists.length;
  const offsetBits = Math.max(1, Math.ceil(Math.log2(regions)));
  const partitionBits = Math.max(...trees.map((t) => recordBits(t.nodes, offsetBits, splitBits)));
  const layout: VeiledLayout = { kind: 'veiled', ...grid, splitBits, offsetBits, partitionBits, regions };
  return { layout, lists, records: trees, maxLeaves };
}
