import { segmentLocations, type Segment } from './boundary.ts';
import { RAD } from './distance.ts';
import type { SitePoints } from './site-points.ts';
import { splitValue, type CellBox } from './veiled-layout.ts';

/** Deepest tree walked in one cell; far beyond what distinct sites need, it bounds degenerate input. */
const MAX_DEPTH = 60;
/** Boxes narrower than this (degrees, about 1.1 m) are not split again: below the coordinate step. */
const MIN_SPAN_DEG = 1e-5;

export interface CellPartition {
  /** Preorder kd-tree of the cell: [axis, m] splits (veiled-layout.ts), null leaves. */
  readonly nodes: Array<[0 | 1, number] | null>;
  /** Candidate list (ascending site indices) of every leaf, in preorder. */
  readonly lists: Int32Array[];
}

/**
 * The kd partition of one coarse cell, split until every leaf lists at most `goal` sites (or can
 * be split no more). A box is cut on its wider side in metres, at the allowed split position
 * (splitBits; veiled-layout.ts) nearest the median of the site places inside it, or at the middle
 * when it holds fewer than two.
 *
 * `inside` holds the locations (site-points.ts) assigned to this cell; `lonMin` turns offsets back
 * into longitudes. Lists are complete by the argument of region-lists.ts: a Voronoi cell meeting a
 * closed box holds its site inside the box or crosses the box's boundary, whose pieces
 * boundary.ts resolves. A site on the boundary but assigned to a neighbouring cell is the nearest
 * site of its own position, a boundary point, so the boundary pieces find it.
 */
export function buildCellPartition(
  points: SitePoints,
  cell: CellBox,
  lonMin: number,
  inside: Int32Array,
  goal: number,
  splitBits: number,
): CellPartition {
  const nodes: Array<[0 | 1, number] | null> = [];
  const lists: Int32Array[] = [];
  const sitesIn = (locations: Iterable<number>) => {
    let total = 0;
    for (const k of locations) total += points.sitesAt[k]!.length;
    return total;
  };
  const latOf = (k: number) => points.lats[points.sitesAt[k]![0]!]!;
  const offOf = (k: number) => (((points.lons[points.sitesAt[k]![0]!]! - lonMin) % 360) + 360) % 360;
  // Cocircular sites beyond `goal` would keep boxes along their meeting point splitting: a budget
  // of boxes ends that (leaves are always sound, only longer).
  let budget = 4 * inside.length + 256;

  const visit = (box: CellBox, here: Int32Array, depth: number) => {
    const latSpan = box.latMax - box.latMin;
    const offSpan = box.offMax - box.offMin;
    const holding = sitesIn(here);
    // A box at a pole touches every other box there: cut it by longitude only to separate sites in it.
    const atPole = box.latMin === -90 || box.latMax === 90;
    const canLat = latSpan >= MIN_SPAN_DEG;
    const canLon = offSpan >= MIN_SPAN_DEG && !(atPole && holding <= goal);
    const final = depth >= MAX_DEPTH || (!canLat && !canLon) || --budget <= 0;
    const found = new Set<number>(here);
    // A box holding more than `goal` sites is split anyway: its boundary need not be resolved.
    if (holding <= goal || final) for (const seg of boxBoundary(box, lonMin)) segmentLocations(points, seg, found);
    if (sitesIn(found) <= goal || final) {
      nodes.push(null);
      const list: number[] = [];
      for (const k of found) list.push(...points.sitesAt[k]!);
      lists.push(Int32Array.from(list).sort());
      return;
    }
    const nearEquator = box.latMin <= 0 && box.latMax >= 0 ? 0 : Math.min(Math.abs(box.latMin), Math.abs(box.latMax));
    const axis: 0 | 1 = canLat && (!canLon || latSpan >= offSpan * Math.cos(nearEquator * RAD)) ? 0 : 1;
    const coord = axis === 0 ? latOf : offOf;
    const [lo, hi] = axis === 0 ? [box.latMin, box.latMax] : [box.offMin, box.offMax];
    const m = splitCode(here, coord, lo, hi, splitBits);
    const value = splitValue(lo, hi, m, splitBits);
    nodes.push([axis, m]);
    const left: number[] = [];
    const right: number[] = [];
    for (const k of here) (coord(k) < value ? left : right).push(k);
    const [leftBox, rightBox]: [CellBox, CellBox] =
      axis === 0 ? [{ ...box, latMax: value }, { ...box, latMin: value }] : [{ ...box, offMax: value }, { ...box, offMin: value }];
    visit(leftBox, Int32Array.from(left), depth + 1);
    visit(rightBox, Int32Array.from(right), depth + 1);
  };

  visit(cell, inside, 0);
  return { nodes, lists };
}

/** The split code whose position is nearest the median of the places inside (the middle one if none). */
function splitCode(here: Int32Array, coord: (k: number) => number, lo: number, hi: number, splitBits: number): number {
  const positions = 2 ** splitBits;
  if (here.length < 2 || splitBits === 0) return splitBits === 0 ? 0 : positions >> 1;
  const values = Float64Array.from(here, coord).sort();
  const share = (values[values.length >> 1]! - lo) / (hi - lo);
  return Math.max(0, Math.min(positions - 1, Math.round(share * (positions + 1)) - 1));
}

/**
 * The boundary pieces of a box: its two meridians (one when it spans the whole circle) and its
 * two parallels (none at a pole, where a parallel is a point already on the meridians).
 */
function boxBoundary(box: CellBox, lonMin: number): Segment[] {
  const west = lonMin + box.offMin;
  const east = lonMin + box.offMax;
  const segs: Segment[] = [{ meridian: true, fixed: west, from: box.latMin, to: box.latMax }];
  if (box.offMax - box.offMin < 360) segs.push({ meridian: true, fixed: east, from: box.latMin, to: box.latMax });
  for (const parallel of [box.latMin, box.latMax]) {
    if (Math.abs(parallel) < 90) segs.push({ meridian: false, fixed: parallel, from: west, to: east });
  }
  return segs;
}
