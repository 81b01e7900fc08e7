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

/** Groups sites by exact (lat, lon) pair; `lats`/`lons` are already dequantised. */
export function buildSitePoints(lats: Float64Array, lons: Float64Array): SitePoints {
  const byKey = new Map<string, number>();
  const locationOf = new Int32Array(lats.length);
  const sitesAt: number[][] = [];
  const coords: number[] = [];
  for (let i = 0; i < lats.length; i++) {
    // -180 and 180 are one meridian: key them alike.
    const lon = lons[i] === 180 ? -180 : lons[i]!;
    const key = `${lats[i]},${Math.abs(lats[i]!) === 90 ? 0 : lon}`;
    let k = byKey.get(key);
    if (k === undefined) {
      k = sitesAt.length;
      byKey.set(key, k);
      sitesAt.push([]);
      coords.push(...unitVector(lats[i]!, lon));
    }
    locationOf[i] = k;
    sitesAt[k]!.push(i);
  }
  const xyz = Float64Array.from(coords);
  return { lats, lons, locationOf, sitesAt, xyz, tree: buildUnitKdTree(xyz) };
}
