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

/**
 * Boxes of every region except a grid's "outside" (which is everything else). A veiled layout
 * publishes only its coarse grid (its regions are fetched privately), so only those cells show.
 */
export function regionBoxes(layout: Layout): RegionBox[] {
  if (layout.kind === 'grid' || layout.kind === 'veiled') {
    const g = { kind: 'grid' as const, latMin: layout.latMin, latMax: layout.latMax, lonMin: layout.lonMin, lonMax: layout.lonMax, rows: layout.rows, cols: layout.cols };
    const out: RegionBox[] = [];
    for (let i = 0; i < g.rows; i++) {
      for (let j = 0; j < g.cols; j++) {
        out.push({ region: i * g.cols + j, latMin: latEdge(g, i), latMax: latEdge(g, i + 1), lonMin: lonEdge(g, j), lonMax: lonEdge(g, j + 1) });
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
