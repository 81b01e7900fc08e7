import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { unitVector } from '../../../core/geo/distance.ts';
import { buildUnitKdTree, kthNearestChord2, nearestChord2, pointsWithin } from '../../../core/geo/kd-tree.ts';

// Reference: a linear scan over all points (slow, obviously correct).
const point = fc.tuple(fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true }));

describe('unit-vector kd-tree', () => {
  it('nearest and within-radius agree with a linear scan (duplicates included)', () => {
    fc.assert(
      fc.property(fc.array(point, { minLength: 1, maxLength: 60 }), point, fc.double({ min: 0, max: 4, noNaN: true }), (pts, q, r2) => {
        const withDupes = [...pts, ...pts.slice(0, 3)];
        const xyz = Float64Array.from(withDupes.flatMap(([a, b]) => unitVector(a, b)));
        const tree = buildUnitKdTree(xyz);
        const [x, y, z] = unitVector(q[0], q[1]);
        const d2 = withDupes.map((_, i) => (xyz[3 * i]! - x) ** 2 + (xyz[3 * i + 1]! - y) ** 2 + (xyz[3 * i + 2]! - z) ** 2);
        expect(nearestChord2(tree, x, y, z)).toBe(Math.min(...d2));
        // k-th nearest: the k-th smallest of the scan, Infinity beyond the point count.
        const sorted = d2.slice().sort((a, b) => a - b);
        for (const k of [1, 2, 3, 8]) expect(kthNearestChord2(tree, x, y, z, k)).toBe(sorted[k - 1] ?? Infinity);
        const inside = pointsWithin(tree, x, y, z, r2, []).sort((a, b) => a - b);
        expect(inside).toEqual(d2.flatMap((d, i) => (d <= r2 ? [i] : [])));
        const capped = pointsWithin(tree, x, y, z, r2, [], 2);
        expect(capped.length).toBe(Math.min(3, inside.length));
      }),
      { numRuns: 300, seed: 20261203 },
    );
  });

  it('stays exact on clustered points queried from far away (every node bounded by its box)', () => {
    // Tight clusters of up to 400 points, queried from points between and far from them: the
    // case where a node's box, not its split plane, decides what is searched.
    const cluster = fc.tuple(point, fc.double({ min: 1e-5, max: 0.05, noNaN: true }), fc.integer({ min: 20, max: 400 }));
    fc.assert(
      fc.property(fc.array(cluster, { minLength: 1, maxLength: 5 }), fc.array(point, { minLength: 1, maxLength: 8 }), fc.integer({ min: 1, max: 8 }), (clusters, queries, k) => {
        const pts: Array<[number, number]> = [];
        for (const [[lat, lon], spread, count] of clusters) {
          for (let i = 0; i < count; i++) pts.push([Math.max(-90, Math.min(90, lat + spread * Math.sin(i * 2.1))), lon + spread * Math.cos(i * 1.3)]);
        }
        const xyz = Float64Array.from(pts.flatMap(([a, b]) => unitVector(a, b)));
        const tree = buildUnitKdTree(xyz);
        for (const q of queries) {
          const [x, y, z] = unitVector(q[0], q[1]);
          const d2 = pts.map((_, i) => (xyz[3 * i]! - x) ** 2 + (xyz[3 * i + 1]! - y) ** 2 + (xyz[3 * i + 2]! - z) ** 2);
          const sorted = d2.slice().sort((a, b) => a - b);
          expect(kthNearestChord2(tree, x, y, z, k)).toBe(sorted[k - 1] ?? Infinity);
          const r2 = sorted[Math.min(sorted.length - 1, 30)]!;
          expect(pointsWithin(tree, x, y, z, r2, []).sort((a, b) => a - b)).toEqual(d2.flatMap((d, i) => (d <= r2 ? [i] : [])));
        }
      }),
      { numRuns: 150, seed: 20261203 },
    );
  });

  it('refuses a k outside 1..8', () => {
    const tree = buildUnitKdTree(Float64Array.from(unitVector(0, 0)));
    expect(() => kthNearestChord2(tree, 1, 0, 0, 0)).toThrow(RangeError);
    expect(() => kthNearestChord2(tree, 1, 0, 0, 9)).toThrow(RangeError);
  });
});
