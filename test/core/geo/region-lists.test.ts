import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { siteBox } from '../../../core/geo/bounding-box.ts';
import { greatCircleMeters } from '../../../core/geo/distance.ts';
import { gridRegion, latEdge, lonEdge, type GridLayout } from '../../../core/geo/grid.ts';
import { gridCandidateLists } from '../../../core/geo/region-lists.ts';
import { buildSitePoints } from '../../../core/geo/site-points.ts';
import { bruteNearest } from '../brute-nearest.ts';

// The nearest site within one candidate list, compared below with bruteNearest over every site.
function nearestIn(list: Int32Array, lats: Float64Array, lons: Float64Array, lat: number, lon: number): number {
  let best = -1;
  let bestD = Infinity;
  for (const i of list) {
    const d = greatCircleMeters(lat, lon, lats[i]!, lons[i]!);
    if (d < bestD || (d === bestD && i < best)) {
      bestD = d;
      best = i;
    }
  }
  return best;
}

const wrap = (lon: number) => ((((lon + 180) % 360) + 360) % 360) - 180;

describe('grid candidate lists', () => {
  it('hold the nearest site of every query, for any grid size over random site sets', () => {
    const unit = fc.double({ min: -1, max: 1, noNaN: true });
    fc.assert(
      fc.property(
        fc.tuple(fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true })),
        fc.constantFrom(0.0005, 0.05, 2, 30, 180),
        fc.array(fc.tuple(unit, unit), { minLength: 1, maxLength: 40 }),
        fc.integer({ min: 1, max: 9 }),
        fc.integer({ min: 1, max: 9 }),
        fc.array(fc.tuple(unit, unit), { minLength: 40, maxLength: 40 }),
        ([clat, clon], spread, offsets, rows, cols, qs) => {
          const lats = Float64Array.from(offsets, ([a]) => Math.max(-90, Math.min(90, clat + a * spread)));
          const lons = Float64Array.from(offsets, ([, b]) => wrap(clon + b * spread * 2));
          const layout: GridLayout = { kind: 'grid', ...siteBox(lats, lons), rows, cols };
          const lists = gridCandidateLists(buildSitePoints(lats, lons), layout);
          expect(lists).toHaveLength(rows * cols + 1);
          // Queries around the sites (1.5 spreads), so inside and just outside the box.
          const queries = qs.map(([a, b]) => [Math.max(-90, Math.min(90, clat + a * spread * 1.5)), wrap(clon + b * spread * 3)]);
          // Queries on and just beside grid lines, where a list missing a boundary site shows.
          qs.forEach(([a, b], k) => {
            const u = (a + 1) / 2;
            const side = (k % 3) - 1;
            const i = Math.floor(((b + 1) / 2) * (rows + 1)) % (rows + 1);
            const j = Math.floor(((b + 1) / 2) * (cols + 1)) % (cols + 1);
            const edgeLat = Math.max(-90, Math.min(90, latEdge(layout, i) + side * 1e-9));
            queries.push([edgeLat, wrap(layout.lonMin + u * (layout.lonMax - layout.lonMin))]);
            queries.push([layout.latMin + u * (layout.latMax - layout.latMin), wrap(lonEdge(layout, j) + side * 1e-9)]);
          });
          for (const [lat, lon] of queries as [number, number][]) {
            const list = lists[gridRegion(layout, lat, lon)]!;
            expect(nearestIn(list, lats, lons, lat, lon)).toBe(bruteNearest(lats, lons, lat, lon).index);
          }
        },
      ),
      { numRuns: 300, seed: 20261203 },
    );
  });

  it('are near-tight: on a regular lattice a cell lists only nearby sites', () => {
    // 10 x 10 sites 0.1 deg apart at the equator, a 10 x 10 grid: a cell sees its own site and
    // the eight around it at most (Voronoi cells of a square lattice are squares).
    const lats = new Float64Array(100);
    const lons = new Float64Array(100);
    for (let i = 0; i < 100; i++) {
      lats[i] = Math.floor(i / 10) * 0.1 + 0.037;
      lons[i] = (i % 10) * 0.1 + 0.021;
    }
    const layout: GridLayout = { kind: 'grid', ...siteBox(lats, lons), rows: 10, cols: 10 };
    const lists = gridCandidateLists(buildSitePoints(lats, lons), layout);
    expect(Math.max(...lists.slice(0, -1).map((l) => l.length))).toBeLessThanOrEqual(9);
    // Outside: exactly the 36 sites on the lattice's rim reach beyond the box.
    expect(lists.at(-1)!.length).toBe(36);
  });
});
