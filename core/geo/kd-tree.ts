/**
 * A static 3-D kd-tree over unit vectors (points on the unit sphere). Distances are chord
 * lengths, which grow strictly with great-circle distance, so "nearest by chord" is "nearest by
 * great circle". Built once, queried many times; no insertion.
 *
 * Layout (as in implicit kd-trees): the points are permuted so that for a node covering the
 * index range [lo, hi], the median m = (lo + hi) >> 1 splits it on axis[m]; [lo, m) lie on or
 * below coords[m] on that axis and (m, hi] on or above. Ranges of at most LEAF points are scanned.
 */
const LEAF = 8;

export interface UnitKdTree {
  /** Number of points. */
  readonly size: number;
  /** x, y, z of point i (tree order) at 3i .. 3i + 2. */
  readonly coords: Float64Array;
  /** Caller's index of the point at tree position i. */
  readonly ids: Int32Array;
  /** Split axis (0, 1, 2) of the node whose median is position i. */
  readonly axis: Uint8Array;
  /**
   * Bounding box of the node whose median is position i (nodes of more than LEAF points):
   * min x, y, z at 6i .. 6i + 2 and max x, y, z at 6i + 3 .. 6i + 5. Searches bound a node by
   * its box, not by its parent's split plane alone: a plane through a far cluster can pass close
   * to the query point, the box cannot (clustered tables made that bound visit most of the tree).
   */
  readonly boxes: Float64Array;
}

/** Builds the tree; `xyz` holds x, y, z of point k at 3k .. 3k + 2. Requires at least one point. */
export function buildUnitKdTree(xyz: Float64Array): UnitKdTree {
  const size = xyz.length / 3;
  if (!Number.isInteger(size) || size < 1) {
    throw new RangeError(`buildUnitKdTree: expected a positive multiple of 3 coordinates, got ${xyz.length}`);
  }
  const coords = Float64Array.from(xyz);
  const ids = new Int32Array(size).map((_, i) => i);
  const axis = new Uint8Array(size);
  const boxes = new Float64Array(6 * size);
  const stack = [0, size - 1];
  while (stack.length > 0) {
    const hi = stack.pop()!;
    const lo = stack.pop()!;
    if (hi - lo + 1 <= LEAF) continue;
    const m = (lo + hi) >> 1;
    const ax = boundingBox(coords, lo, hi, boxes, 6 * m);
    select(coords, ids, lo, hi, m, ax);
    axis[m] = ax;
    stack.push(lo, m - 1, m + 1, hi);
  }
  return { size, coords, ids, axis, boxes };
}

/** Writes the box of points lo..hi at boxes[at..at+6) and returns its widest axis. */
function boundingBox(c: Float64Array, lo: number, hi: number, boxes: Float64Array, at: number): number {
  let best = 0;
  let bestSpread = -1;
  for (let ax = 0; ax < 3; ax++) {
    let min = Infinity;
    let max = -Infinity;
    for (let i = lo; i <= hi; i++) {
      const v = c[3 * i + ax]!;
      if (v < min) min = v;
      if (v > max) max = v;
    }
    boxes[at + ax] = min;
    boxes[at + 3 + ax] = max;
    if (max - min > bestSpread) {
      bestSpread = max - min;
      best = ax;
    }
  }
  return best;
}

/** Squared distance from (x, y, z) to the box of the node of range lo..hi, or 0 for a leaf range (no box kept). */
function boxDist2(t: UnitKdTree, lo: number, hi: number, x: number, y: number, z: number): number {
  if (hi - lo + 1 <= LEAF) return 0;
  const b = t.boxes;
  const at = 6 * ((lo + hi) >> 1);
  const dx = Math.max(b[at]! - x, 0, x - b[at + 3]!);
  const dy = Math.max(b[at + 1]! - y, 0, y - b[at + 4]!);
  const dz = Math.max(b[at + 2]! - z, 0, z - b[at + 5]!);
  return dx * dx + dy * dy + dz * dz;
}

/** Quickselect: puts the k-th smallest on `ax` at position k, smaller before, larger after. */
function select(c: Float64Array, ids: Int32Array, lo: number, hi: number, k: number, ax: number): void {
  while (hi > lo) {
    const pivot = c[3 * ((lo + hi) >> 1) + ax]!;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (c[3 * i + ax]! < pivot) i++;
      while (c[3 * j + ax]! > pivot) j--;
      if (i <= j) {
        swap(c, ids, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

function swap(c: Float64Array, ids: Int32Array, i: number, j: number): void {
  const t = ids[i]!;
  ids[i] = ids[j]!;
  ids[j] = t;
  for (let a = 0; a < 3; a++) {
    const v = c[3 * i + a]!;
    c[3 * i + a] = c[3 * j + a]!;
    c[3 * j + a] = v;
  }
}

function dist2(c: Float64Array, i: number, x: number, y: number, z: number): number {
  const dx = c[3 * i]! - x;
  const dy = c[3 * i + 1]! - y;
  const dz = c[3 * i + 2]! - z;
  return dx * dx + dy * dy + dz * dz;
}

// Scratch stacks for the queries below (one query runs at a time in a JS thread; a query never
// calls another). Each step pops one range and pushes at most two halves of it, so the stack
// never holds more than log2(size) + 2 ranges, far below the capacity.
const STACK = 256;
const stackLo = new Int32Array(STACK);
const stackHi = new Int32Array(STACK);
const stackBound = new Float64Array(STACK);

/** Squared chord from (x, y, z) to the nearest point of the tree. Exact (no approximation). */
export function nearestChord2(t: UnitKdTree, x: number, y: number, z: number): number {
  return kthNearestChord2(t, x, y, z, 1);
}

/** Most neighbours kthNearestChord2 ranks (the build's k is at most 8). */
export const MAX_RANK = 8;
const ranked = new Float64Array(MAX_RANK);

/**
 * Squared chord from (x, y, z) to its k-th nearest point of the tree (k = 1: the nearest), or
 * Infinity when the tree holds fewer than k points. Exact. Requires 1 <= k <= MAX_RANK.
 */
export function kthNearestChord2(t: UnitKdTree, x: number, y: number, z: number, k: number): number {
  if (!Number.isInteger(k) || k < 1 || k > MAX_RANK) throw new RangeError(`kthNearestChord2: expected k in 1..${MAX_RANK}, got ${k}`);
  const c = t.coords;
  // ranked[0..k) ascending: the k smallest squared chords seen so far; the bound is the last.
  ranked.fill(Infinity, 0, k);
  const offer = (d: number) => {
    if (d >= ranked[k - 1]!) return;
    let i = k - 1;
    while (i > 0 && ranked[i - 1]! > d) {
      ranked[i] = ranked[i - 1]!;
      i--;
    }
    ranked[i] = d;
  };
  let top = 1;
  stackLo[0] = 0;
  stackHi[0] = t.size - 1;
  stackBound[0] = 0;
  while (top > 0) {
    top--;
    if (stackBound[top]! >= ranked[k - 1]!) continue;
    const lo = stackLo[top]!;
    const hi = stackHi[top]!;
    if (hi - lo + 1 <= LEAF) {
      for (let i = lo; i <= hi; i++) offer(dist2(c, i, x, y, z));
      continue;
    }
    const m = (lo + hi) >> 1;
    offer(dist2(c, m, x, y, z));
    const ax = t.axis[m]!;
    const diff = (ax === 0 ? x : ax === 1 ? y : z) - c[3 * m + ax]!;
    // Far side first onto the stack, so the near side is searched first. A side is bounded by
    // the split plane and by its own box, whichever is farther.
    const farLo = diff <= 0 ? m + 1 : lo;
    const farHi = diff <= 0 ? hi : m - 1;
    const nearLo = diff <= 0 ? lo : m + 1;
    const nearHi = diff <= 0 ? m - 1 : hi;
    if (farLo <= farHi) {
      stackLo[top] = farLo;
      stackHi[top] = farHi;
      stackBound[top] = Math.max(diff * diff, boxDist2(t, farLo, farHi, x, y, z));
      top++;
    }
    if (nearLo <= nearHi) {
      stackLo[top] = nearLo;
      stackHi[top] = nearHi;
      stackBound[top] = boxDist2(t, nearLo, nearHi, x, y, z);
      top++;
    }
  }
  return ranked[k - 1]!;
}

/**
 * Caller indices of the points within squared chord `r2` of (x, y, z) (inclusive), pushed onto
 * `out` in no particular order. Stops early once more than `limit` points are found, so the
 * caller can tell "few" from "many" cheaply; then `out` holds limit + 1 of them.
 */
export function pointsWithin(t: UnitKdTree, x: number, y: number, z: number, r2: number, out: number[], limit = Infinity): number[] {
  const c = t.coords;
  let top = 1;
  stackLo[0] = 0;
  stackHi[0] = t.size - 1;
  while (top > 0) {
    top--;
    const lo = stackLo[top]!;
    const hi = stackHi[top]!;
    if (hi - lo + 1 <= LEAF) {
      for (let i = lo; i <= hi; i++) {
        if (dist2(c, i, x, y, z) <= r2) {
          out.push(t.ids[i]!);
          if (out.length > limit) return out;
        }
      }
      continue;
    }
    const m = (lo + hi) >> 1;
    if (dist2(c, m, x, y, z) <= r2) {
      out.push(t.ids[m]!);
      if (out.length > limit) return out;
    }
    const ax = t.axis[m]!;
    const diff = (ax === 0 ? x : ax === 1 ? y : z) - c[3 * m + ax]!;
    if ((diff <= 0 || diff * diff <= r2) && m - 1 >= lo && boxDist2(t, lo, m - 1, x, y, z) <= r2) {
      stackLo[top] = lo;
      stackHi[top] = m - 1;
      top++;
    }
    if ((diff >= 0 || diff * diff <= r2) && hi >= m + 1 && boxDist2(t, m + 1, hi, x, y, z) <= r2) {
      stackLo[top] = m + 1;
      stackHi[top] = hi;
      top++;
    }
  }
  return out;
}
