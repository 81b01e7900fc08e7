import { segmentLocations, type Segment } from './boundary.ts';
import { RAD } from './distance.ts';
import type { SitePoints } from './site-points.ts';
import { runSteps, type Steps } from '../steps/steps.ts';

/**
 * The adaptive layout: the whole sphere cut by a kd-tree of latitude and longitude splits until
 * every leaf's candidate list is short. Dense places get small regions, empty places large ones.
 *
 * The root box is every point: latitude [-90, 90], longitude offsets [0, 360) east of `lonStart`
 * (the middle of the widest gap between site longitudes, so splits rarely straddle the seam).
 * `nodes` lists the tree in preorder: an inner node is [axis, value] (axis 0 splits latitude at
 * value degrees, axis 1 splits the longitude offset at value degrees), a leaf is null. Leaves
 * are regions, numbered in preorder. A point goes left when its coordinate is below the value,
 * right otherwise; lists are built for closed boxes, so either side of a split line is sound.
 *
 * Disclosure: the splits follow the sites, so a published tree shows where sites are dense
 * (not where each one is). `nearveil plan` says so beside the layout's cost.
 */
export interface KdLayout {
  readonly kind: 'kd';
  readonly lonStart: number;
  readonly nodes: Array<[0 | 1, number] | null>;
}

export interface Box {
  latMin: number;
  latMax: number;
  /** Longitude offsets east of lonStart, 0 <= offMin < offMax <= 360. */
  offMin: number;
  offMax: number;
}

/** Deepest tree walked; far beyond what 200,000 distinct sites need, it bounds degenerate input. */
const MAX_DEPTH = 60;
/** Boxes narrower than this (degrees, about 1.1 m) are not split again: below the coordinate step. */
const MIN_SPAN_DEG = 1e-5;

/** Region of a point (degrees). No range checks: callers validate. */
export function kdRegion(layout: KdLayout, lat: number, lon: number): number {
  const offset = (((lon - layout.lonStart) % 360) + 360) % 360;
  let region = 0;
  let i = 0;
  // Walk down; count the leaves of every left subtree we skip to number the leaf we reach.
  while (layout.nodes[i] !== null) {
    const [axis, value] = layout.nodes[i]!;
    const goRight = (axis === 0 ? lat : offset) >= value;
    if (!goRight) {
      i++;
      continue;
    }
    const afterLeft = skipSubtree(layout.nodes, i + 1);
    region += leavesIn(layout.nodes, i + 1, afterLeft);
    i = afterLeft;
  }
  return region;
}

/** Index just past the subtree rooted at i (preorder). */
function skipSubtree(nodes: KdLayout['nodes'], i: number): number {
  let open = 1;
  while (open > 0) {
    open += nodes[i] === null ? -1 : 1;
    i++;
  }
  return i;
}

function leavesIn(nodes: KdLayout['nodes'], from: number, to: number): number {
  let count = 0;
  for (let i = from; i < to; i++) if (nodes[i] === null) count++;
  return count;
}

/**
 * Builds the kd layout and the candidate list of every leaf, splitting while a box lists more
 * than `target` sites: on the box's wider side in metres, at the median site inside it (or the
 * middle when it holds fewer than two distinct places). Lists are complete by the argument of
 * region-lists.ts: a Voronoi cell meeting a closed box holds its site inside the box or crosses
 * the box's boundary, whose pieces are resolved by boundary.ts.
 */
export function buildKdLayout(
  points: SitePoints,
  lonStart: number,
  target: number,
  options: { k?: number; onProgress?: (share: number) => void } = {},
): { layout: KdLayout; lists: Int32Array[] } {
  return runSteps(kdLayoutSteps(points, lonStart, target, options.k ?? 1), options.onProgress);
}

/** buildKdLayout as steps (core/steps): a checkpoint after every 4 boxes resolved. */
export function* kdLayoutSteps(points: SitePoints, lonStart: number, target: number, k = 1): Steps<{ layout: KdLayout; lists: Int32Array[] }> {
  const nodes: Array<[0 | 1, number] | null> = [];
  const lists: Int32Array[] = [];
  const count = points.sitesAt.length;
  const lat = new Float64Array(count);
  const off = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    const site = points.sitesAt[k]![0]!;
    lat[k] = points.lats[site]!;
    off[k] = (((points.lons[site]! - lonStart) % 360) + 360) % 360;
  }
  const sitesIn = (locations: Iterable<number>) => {
    let total = 0;
    for (const k of locations) total += points.sitesAt[k]!.length;
    return total;
  };

  // Sites sharing one place are always listed together, and k + 2 order-k Voronoi cells meet at a
  // vertex (in general position): boxes around a vertex of the k + 2 largest groups cannot list fewer.
  const groups = points.sitesAt.map((s) => s.length).sort((a, b) => b - a);
  const goal = Math.max(target, groups.slice(0, k + 2).reduce((sum, g) => sum + g, 0));
  // Boxes side by side across a split line may share a whole side: a piece is resolved once and
  // kept until the second asks. Every box sharing a piece lies under the node whose split line
  // holds it, so the pieces on a node's line are dropped once the node is done (keeping every
  // piece to the end held tens of MB on large tables).
  const shared = new Map<string, number[]>();
  const onLine = new Map<number, string[]>();
  let nodeCount = 0;
  let resolved = 0;
  let placed = 0;
  // Cocircular sites beyond `goal` would keep boxes along their meeting point splitting: a budget
  // of boxes ends that (leaves are always sound, only longer).
  let budget = 4 * count + 256;

  const pieceKey = (seg: Segment) => `${seg.meridian ? 'm' : 'p'}${seg.fixed},${seg.from},${seg.to}`;
  /** `sides`: the node whose split line made each side of the box (west, east, south, north), or -1 for the sphere's own edges. */
  function* visit(box: Box, inside: Int32Array, depth: number, parentList: readonly number[] | null, sides: readonly number[]): Generator<number, void, undefined> {
    const latSpan = box.latMax - box.latMin;
    const offSpan = box.offMax - box.offMin;
    const holding = sitesIn(inside);
    // Every box touching a pole touches all the others there, so splitting such a box by longitude
    // only pays while sites inside it must be separated; otherwise it is cut by latitude alone.
    const atPole = box.latMin === -90 || box.latMax === 90;
    const canLat = latSpan >= MIN_SPAN_DEG;
    const canLon = offSpan >= MIN_SPAN_DEG && !(atPole && holding <= goal);
    const final = depth >= MAX_DEPTH || (!canLat && !canLon) || --budget <= 0;
    // A box holding more than `goal` sites is split anyway: its boundary need not be resolved.
    let found: Set<number> | null = null;
    if (holding <= goal || final) {
      found = new Set<number>(inside);
      for (const seg of boxBoundary(box, lonStart)) {
        const key = pieceKey(seg);
        let on = shared.get(key);
        if (on === undefined) {
          const at = new Set<number>();
          // Every place needed on the boundary is in the parent's list (the boundary lies in the parent).
          segmentLocations(points, seg, at, k, parentList ?? undefined);
          on = [...at];
          const owner = sides[sideOf(box, seg, lonStart)]!;
          if (owner >= 0) {
            shared.set(key, on);
            onLine.get(owner)!.push(key);
          }
        } else shared.delete(key);
        for (const s of on) found.add(s);
      }
      // Resolving a boundary is the costly part: a checkpoint after every 4, leaf or not (a
      // leaf takes about half a millisecond on 100,000 clustered sites).
      if (++resolved % 4 === 0) yield placed / count;
    }
    if (found !== null && (sitesIn(found) <= goal || final)) {
      placed += inside.length;
      nodes.push(null);
      const list: number[] = [];
      for (const at of found) list.push(...points.sitesAt[at]!);
      lists.push(Int32Array.from(list).sort());
      return;
    }
    const nearEquator = box.latMin <= 0 && box.latMax >= 0 ? 0 : Math.min(Math.abs(box.latMin), Math.abs(box.latMax));
    const axis: 0 | 1 = canLat && (!canLon || latSpan >= offSpan * Math.cos(nearEquator * RAD)) ? 0 : 1;
    const coord = axis === 0 ? lat : off;
    const [lo, hi] = axis === 0 ? [box.latMin, box.latMax] : [box.offMin, box.offMax];
    const value = splitValue(inside, coord, lo, hi);
    nodes.push([axis, value]);
    const left: number[] = [];
    const right: number[] = [];
    for (const k of inside) (coord[k]! < value ? left : right).push(k);
    const [leftBox, rightBox]: [Box, Box] =
      axis === 0
        ? [{ ...box, latMax: value }, { ...box, latMin: value }]
        : [{ ...box, offMax: value }, { ...box, offMin: value }];
    const list = found === null ? null : [...found];
    const id = nodeCount++;
    onLine.set(id, []);
    const [w, e, so, no] = sides;
    const [leftSides, rightSides] = axis === 0 ? [[w!, e!, so!, id], [w!, e!, id, no!]] : [[w!, id, so!, no!], [id, e!, so!, no!]];
    yield* visit(leftBox, Int32Array.from(left), depth + 1, list, leftSides);
    yield* visit(rightBox, Int32Array.from(right), depth + 1, list, rightSides);
    // Every box that could share a piece of this node's line has been visited.
    for (const key of onLine.get(id)!) shared.delete(key);
    onLine.delete(id);
  }

  yield* visit({ latMin: -90, latMax: 90, offMin: 0, offMax: 360 }, Int32Array.from({ length: count }, (_, k) => k), 0, null, [-1, -1, -1, -1]);
  return { layout: { kind: 'kd', lonStart, nodes }, lists };
}

/** Which side of `box` a piece of boxBoundary(box) is: 0 west, 1 east, 2 south, 3 north. */
function sideOf(box: Box, seg: Segment, lonStart: number): number {
  if (seg.meridian) return seg.fixed === lonStart + box.offMin ? 0 : 1;
  return seg.fixed === box.latMin ? 2 : 3;
}

/** The median of the coordinates inside (strictly between lo and hi), else the middle. */
function splitValue(inside: Int32Array, coord: Float64Array, lo: number, hi: number): number {
  if (inside.length >= 2) {
    const values = Float64Array.from(inside, (k) => coord[k]!).sort();
    const median = values[values.length >> 1]!;
    if (median > lo && median < hi) return median;
  }
  return (lo + hi) / 2;
}

/**
 * The boundary pieces of a box: its two meridians (one when it spans the whole circle) and its
 * two parallels (none at a pole, where a parallel is a point already on the meridians).
 * Longitudes are absolute (lonStart + offset, possibly above 180: trigonometry does not mind).
 */
export function boxBoundary(box: Box, lonStart: number): Segment[] {
  const west = lonStart + box.offMin;
  const east = lonStart + box.offMax;
  const segs: Segment[] = [{ meridian: true, fixed: west, from: box.latMin, to: box.latMax }];
  if (box.offMax - box.offMin < 360) segs.push({ meridian: true, fixed: east, from: box.latMin, to: box.latMax });
  for (const parallel of [box.latMin, box.latMax]) {
    if (Math.abs(parallel) < 90) segs.push({ meridian: false, fixed: parallel, from: west, to: east });
  }
  return segs;
}
