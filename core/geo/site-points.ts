import { unitVector } from './distance.ts';
import { buildUnitKdTree, type UnitKdTree } from './kd-tree.ts';

/**
 * Sites as the build sees them: at their quantised-then-dequantised coordinates (what the client
 * decodes), merged into distinct locations so that sites sharing a point are always candidates
 * together. Location k holds sites `sitesAt[k]` (ascending), sits at unit vector
 * tree-point k, and every site maps back through `locationOf`.
 */
export interface SitePoints {
  readonly lats: Float64Array;
  readonly lons: Float64Array;
  readonly locationOf: Int32Array;
  readonly sitesAt: readonly (readonly number[])[];
  readonly xyz: Float64Array;
  readonly tree: UnitKdTree;
}

/**
 * Groups sites by exact (lat, lon) pair; `lats`/`lons` are already dequantised. Sites are sorted
 * by coordinates to find the groups (no map keyed by text: a 200,000-site table would hold one
 * string per site), and locations are numbered by their first site, so the result is the same
 * as grouping in site order.
 */
export function buildSitePoints(lats: Float64Array, lons: Float64Array): SitePoints {
  const n = lats.length;
  // -180 and 180 are one meridian, and every longitude is one point at a pole: key them alike.
  const keyLon = (i: number) => (Math.abs(lats[i]!) === 90 ? 0 : lons[i] === 180 ? -180 : lons[i]!);
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((a, b) => lats[a]! - lats[b]! || keyLon(a) - keyLon(b) || a - b);
  // First site of every group, for each site; groups then take numbers in order of first site.
  const firstOf = new Int32Array(n);
  for (let j = 0; j < n; j++) {
    const i = order[j]!;
    const prev = j > 0 ? order[j - 1]! : -1;
    firstOf[i] = prev >= 0 && lats[prev] === lats[i] && keyLon(prev) === keyLon(i) ? firstOf[prev]! : i;
  }
  const locationOf = new Int32Array(n);
  const sitesAt: number[][] = [];
  const coords = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    if (firstOf[i] === i) {
      const [x, y, z] = unitVector(lats[i]!, keyLon(i));
      coords.set([x, y, z], 3 * sitesAt.length);
      locationOf[i] = sitesAt.length;
      sitesAt.push([i]);
    } else {
      locationOf[i] = locationOf[firstOf[i]!]!;
      sitesAt[locationOf[i]!]!.push(i);
    }
  }
  const xyz = coords.slice(0, 3 * sitesAt.length);
  return { lats, lons, locationOf, sitesAt, xyz, tree: buildUnitKdTree(xyz) };
}
