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
      { numRuns: 300 },
    );
  });

  it('refuses a k outside 1..8', () => {
    const tree = buildUnitKdTree(Float64Array.from(unitVector(0, 0)));
    expect(() => kthNearestChord2(tree, 1, 0, 0, 0)).toThrow(RangeError);
    expect(() => kthNearestChord2(tree, 1, 0, 0, 9)).toThrow(RangeError);
  });
});
