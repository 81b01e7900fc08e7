import { latEdge, lonEdge } from '../../../core/geo/grid.ts';
import { kdLeafBoxes } from '../../../core/geo/kd-regions.ts';
import type { Layout } from '../../../core/geo/manifest.ts';

/** A region as a latitude/longitude box (lonMax may exceed 180), for outlines and heat. */
export interface RegionBox {
  region: number;
  latMin: number;
  latMax: number;
  lonMin: number;
  lonMax: number;
}

/** Boxes of every region except a grid's "outside" (which is everything else). */
export function regionBoxes(layout: Layout): RegionBox[] {
  if (layout.kind === 'grid') {
    const out: RegionBox[] = [];
    for (let i = 0; i < layout.rows; i++) {
      for (let j = 0; j < layout.cols; j++) {
        out.push({ region: i * layout.cols + j, latMin: latEdge(layout, i), latMax: latEdge(layout, i + 1), lonMin: lonEdge(layout, j), lonMax: lonEdge(layout, j + 1) });
      }
    }
    return out;
  }
  return kdLeafBoxes(layout).map((b, region) => ({
    region,
    latMin: b.latMin,
    latMax: b.latMax,
    lonMin: layout.lonStart + b.offMin,
    lonMax: layout.lonStart + b.offMax,
  }));
}
