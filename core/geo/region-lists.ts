import { segmentLocations, type Segment } from './boundary.ts';
import { gridRegion, isFullCircle, latEdge, lonEdge, type GridLayout } from './grid.ts';
import type { SitePoints } from './site-points.ts';
import { runSteps, type Steps } from '../steps/steps.ts';

/**
 * Candidate lists of every region of a grid: region i's list holds, in ascending order, every
 * site that is a nearest site (by great circle, at the build's coordinates) of some point of
 * the region. Returns rows * cols + 1 lists, the last for "outside".
 *
 * Why it is complete: a spherical Voronoi cell (points with a given site among their nearest)
 * is an intersection of hemispheres, hence connected. If it meets a closed cell B, either its site
 * lies in B, or it runs from outside B into B and so crosses B's boundary. For "outside", every
 * site lies in the box, so a Voronoi cell reaching outside crosses the box's outer boundary.
 * Boundary pieces are resolved once (boundary.ts) and shared by both cells beside them.
 */
export function gridCandidateLists(
  points: SitePoints,
  g: GridLayout,
  options: { k?: number; onProgress?: (share: number) => void } = {},
): Int32Array[] {
  return runSteps(gridListSteps(points, g, options.k ?? 1), options.onProgress);
}

/** gridCandidateLists as steps (core/steps): a checkpoint after every 64 boundary pieces. */
export function* gridListSteps(points: SitePoints, g: GridLayout, k = 1): Steps<Int32Array[]> {
  const pieces = (g.rows + 1) * g.cols + g.rows * (g.cols + 1);
  let done = 0;
  const { rows, cols } = g;
  const outside = rows * cols;
  const full = isFullCircle(g);
  const sets: Set<number>[] = Array.from({ length: outside + 1 }, () => new Set<number>());
  const share = (seg: Segment, regions: number[]) => {
    const found = new Set<number>();
    segmentLocations(points, seg, found, k);
    for (const r of regions) for (const k of found) sets[r]!.add(k);
    return ++done % 64 === 0;
  };
  // Meridian pieces: meridian j between parallels i and i + 1 borders cells (i, j - 1) and (i, j).
  const meridians = full ? cols : cols + 1;
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < meridians; j++) {
      const regions: number[] = [];
      if (j > 0) regions.push(i * cols + j - 1);
      else if (full) regions.push(i * cols + cols - 1);
      if (j < cols) regions.push(i * cols + j);
      if (!full && (j === 0 || j === cols)) regions.push(outside);
      if (share({ meridian: true, fixed: lonEdge(g, j), from: latEdge(g, i), to: latEdge(g, i + 1) }, regions)) yield done / pieces;
    }
  }
  // Parallel pieces: parallel i between meridians j and j + 1 borders cells (i - 1, j) and (i, j).
  // A parallel at a pole is a single point and borders no outside.
  for (let i = 0; i <= rows; i++) {
    const lat = latEdge(g, i);
    for (let j = 0; j < cols; j++) {
      const regions: number[] = [];
      if (i > 0) regions.push((i - 1) * cols + j);
      if (i < rows) regions.push(i * cols + j);
      if ((i === 0 || i === rows) && Math.abs(lat) !== 90) regions.push(outside);
      if (share({ meridian: false, fixed: lat, from: lonEdge(g, j), to: lonEdge(g, j + 1) }, regions)) yield done / pieces;
    }
  }
  for (let k = 0; k < points.sitesAt.length; k++) {
    const site = points.sitesAt[k]![0]!;
    sets[gridRegion(g, points.lats[site]!, points.lons[site]!)]!.add(k);
  }
  return sets.map((locations) => {
    const list: number[] = [];
    for (const k of locations) list.push(...points.sitesAt[k]!);
    return Int32Array.from(list).sort();
  });
}
