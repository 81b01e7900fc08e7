import { segmentLocations } from './boundary.ts';
import { boxBoundary, kdRegion, type Box, type KdLayout } from './kd-layout.ts';
import type { SitePoints } from './site-points.ts';

/**
 * The regions of a published kd layout, for drawing and for checking a build: each leaf's box
 * (latitude, and longitude offsets east of `lonStart`) and its candidate list, rebuilt from the
 * layout and the sites alone. The lists equal the build's (buildKdLayout): the sites inside
 * the box plus those whose Voronoi cells cross its boundary.
 */
export function kdLeafBoxes(layout: KdLayout): Box[] {
  const boxes: Box[] = [];
  let i = 0;
  const walk = (box: Box) => {
    const node = layout.nodes[i++];
    if (node === null || node === undefined) {
      boxes.push(box);
      return;
    }
    const [axis, value] = node;
    if (axis === 0) {
      walk({ ...box, latMax: value });
      walk({ ...box, latMin: value });
    } else {
      walk({ ...box, offMax: value });
      walk({ ...box, offMin: value });
    }
  };
  walk({ latMin: -90, latMax: 90, offMin: 0, offMax: 360 });
  return boxes;
}

/** Candidate list of every leaf (ascending site indices), in region order. */
export function kdCandidateLists(points: SitePoints, layout: KdLayout): Int32Array[] {
  const boxes = kdLeafBoxes(layout);
  const found: Set<number>[] = boxes.map(() => new Set<number>());
  for (let k = 0; k < points.sitesAt.length; k++) {
    const site = points.sitesAt[k]![0]!;
    found[kdRegion(layout, points.lats[site]!, points.lons[site]!)]!.add(k);
  }
  return boxes.map((box, region) => {
    const set = found[region]!;
    for (const seg of boxBoundary(box, layout.lonStart)) segmentLocations(points, seg, set);
    const list: number[] = [];
    for (const k of set) list.push(...points.sitesAt[k]!);
    return Int32Array.from(list).sort();
  });
}
