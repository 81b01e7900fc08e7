import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { greatCircleMeters } from '../../../core/geo/distance.ts';
import { widestLongitudeGap } from '../../../core/geo/bounding-box.ts';
import { siteBox } from '../../../core/geo/bounding-box.ts';
import { gridRegion, latEdge, lonEdge, type GridLayout } from '../../../core/geo/grid.ts';
import { buildKdLayout, kdRegion } from '../../../core/geo/kd-layout.ts';
import { gridCandidateLists } from '../../../core/geo/region-lists.ts';
import { buildSitePoints } from '../../../core/geo/site-points.ts';

/**
 * Reference (slow, obviously correct): the sites needed at a point for order k, every site with
 * fewer than k sites strictly nearer. "Strictly" takes a 1e-6 m margin, so near-ties count as
 * ties and the reference asks for more sites, never fewer.
 */
function neededAt(lats: Float64Array, lons: Float64Array, lat: number, lon: number, k: number): number[] {
  const d = Array.from(lats, (a, i) => greatCircleMeters(lat, lon, a, lons[i]!));
  return d.flatMap((ds, s) => (d.filter((dt) => dt < ds - 1e-6).length < k ? [s] : []));
}

const wrap = (lon: number) => ((((lon + 180) % 360) + 360) % 360) - 180;
const unit = fc.double({ min: -1, max: 1, noNaN: true });

/** Site sets around a centre anywhere (poles and antimeridian included), some sites repeated. */
const siteSets = fc.record({
  centre: fc.tuple(fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true })),
  spread: fc.constantFrom(0.001, 0.5, 20, 180),
  offsets: fc.array(fc.tuple(unit, unit), { minLength: 1, maxLength: 30 }),
  repeats: fc.nat({ max: 3 }),
  k: fc.constantFrom(1, 2, 3, 5, 8),
  queries: fc.array(fc.tuple(unit, unit), { minLength: 30, maxLength: 30 }),
});

function sitesOf({ centre: [clat, clon], spread, offsets, repeats }: { centre: [number, number]; spread: number; offsets: [number, number][]; repeats: number }) {
  const all = [...offsets, ...offsets.slice(0, repeats)];
  const lats = Float64Array.from(all, ([a]) => Math.max(-90, Math.min(90, clat + a * spread)));
  const lons = Float64Array.from(all, ([, b]) => wrap(clon + b * spread * 2));
  return { lats, lons };
}

describe('order-k candidate lists (every site among the k nearest somewhere in the region)', () => {
  it('grid lists hold every site needed at random points and at points on cell edges', () => {
    fc.assert(
      fc.property(siteSets, fc.integer({ min: 1, max: 6 }), fc.integer({ min: 1, max: 6 }), (set, rows, cols) => {
        const { lats, lons } = sitesOf(set);
        const layout: GridLayout = { kind: 'grid', ...siteBox(lats, lons), rows, cols };
        const lists = gridCandidateLists(buildSitePoints(lats, lons), layout, { k: set.k });
        const queries = set.queries.flatMap(([a, b], i): [number, number][] => [
          [Math.max(-90, Math.min(90, set.centre[0] + a * set.spread * 1.5)), wrap(set.centre[1] + b * set.spread * 3)],
          [latEdge(layout, i % (rows + 1)), wrap(layout.lonMin + ((b + 1) / 2) * (layout.lonMax - layout.lonMin))],
          [layout.latMin + ((a + 1) / 2) * (layout.latMax - layout.latMin), wrap(lonEdge(layout, i % (cols + 1)))],
        ]);
        for (const [lat, lon] of queries) {
          const list = Array.from(lists[gridRegion(layout, lat, lon)]!);
          for (const s of neededAt(lats, lons, lat, lon, set.k)) expect({ lat, lon, s, listed: list.includes(s) }).toEqual({ lat, lon, s, listed: true });
        }
      }),
      { numRuns: 150, seed: 20261203 },
    );
  });

  it('adaptive lists hold every site needed at random points anywhere on Earth', () => {
    fc.assert(
      fc.property(siteSets, fc.constantFrom(4, 8, 16), (set, target) => {
        const { lats, lons } = sitesOf(set);
        const { start, gap } = widestLongitudeGap(lons);
        const { layout, lists } = buildKdLayout(buildSitePoints(lats, lons), start - gap / 2, target, { k: set.k });
        const queries = set.queries.flatMap(([a, b]): [number, number][] => [
          [Math.max(-90, Math.min(90, set.centre[0] + a * set.spread * 1.5)), wrap(set.centre[1] + b * set.spread * 3)],
          [a * 90, b * 180],
        ]);
        for (const [lat, lon] of queries) {
          const list = Array.from(lists[kdRegion(layout, lat, lon)]!);
          for (const s of neededAt(lats, lons, lat, lon, set.k)) expect({ lat, lon, s, listed: list.includes(s) }).toEqual({ lat, lon, s, listed: true });
        }
      }),
      { numRuns: 150, seed: 20261203 },
    );
  });

  it('are tight on a lattice: every listed site comes within sampling error of the k nearest somewhere on its cell', () => {
    // 5 x 5 sites about 0.1 deg apart near the equator (jittered, so no exact ties), 4 x 4 cells.
    // A site is needed somewhere in a closed cell iff it is needed somewhere on the cell's edge
    // or at its own position inside (region-lists.ts); edges are sampled every 1/2000 of a side.
    // d(s) - D_k changes by at most 2 x the step between samples (triangle inequality), so a
    // needed site shows a gap below 2 steps at some sample.
    const lats = Float64Array.from({ length: 25 }, (_, i) => Math.floor(i / 5) * 0.1 + 0.037 + (i % 3) * 0.004);
    const lons = Float64Array.from({ length: 25 }, (_, i) => (i % 5) * 0.1 + 0.021 + (i % 4) * 0.003);
    const layout: GridLayout = { kind: 'grid', ...siteBox(lats, lons), rows: 4, cols: 4 };
    const points = buildSitePoints(lats, lons);
    const steps = 2000;
    for (const k of [1, 2, 3]) {
      const lists = gridCandidateLists(points, layout, { k });
      for (const cell of [0, 5, 10, 15]) {
        const [row, col] = [Math.floor(cell / 4), cell % 4];
        const [la0, la1, lo0, lo1] = [latEdge(layout, row), latEdge(layout, row + 1), lonEdge(layout, col), lonEdge(layout, col + 1)];
        const samples: [number, number][] = [];
        for (let i = 0; i <= steps; i++) {
          const u = i / steps;
          samples.push([la0 + (la1 - la0) * u, lo0], [la0 + (la1 - la0) * u, lo1], [la0, lo0 + (lo1 - lo0) * u], [la1, lo0 + (lo1 - lo0) * u]);
        }
        const stepM = greatCircleMeters(la0, lo0, la1, lo0) / steps + greatCircleMeters(la0, lo0, la0, lo1) / steps;
        const gap = new Float64Array(25).fill(Infinity);
        for (const [lat, lon] of samples) {
          const d = Array.from(lats, (a, s) => greatCircleMeters(lat, lon, a, lons[s]!));
          const kth = d.slice().sort((a, b) => a - b)[k - 1]!;
          d.forEach((ds, s) => (gap[s] = Math.min(gap[s]!, ds - kth)));
        }
        const list = Array.from(lists[cell]!);
        for (let s = 0; s < 25; s++) {
          const inside = gridRegion(layout, lats[s]!, lons[s]!) === cell;
          // Listed iff inside, or needed on the edge (gap 0); sites near the threshold are not judged.
          if (inside || gap[s]! <= 0) expect({ k, cell, s, listed: list.includes(s) }).toEqual({ k, cell, s, listed: true });
          else if (gap[s]! > 2 * stepM) expect({ k, cell, s, listed: list.includes(s) }).toEqual({ k, cell, s, listed: false });
        }
      }
    }
  });
});
