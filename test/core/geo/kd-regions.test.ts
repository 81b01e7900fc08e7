import { describe, expect, it } from 'vitest';
import { widestLongitudeGap } from '../../../core/geo/bounding-box.ts';
import { greatCircleMeters } from '../../../core/geo/distance.ts';
import { buildKdLayout, kdRegion } from '../../../core/geo/kd-layout.ts';
import { kdCandidateLists, kdLeafBoxes } from '../../../core/geo/kd-regions.ts';
import { buildSitePoints } from '../../../core/geo/site-points.ts';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';

function points(n: number, seed: number, spread: [number, number, number, number]) {
  const random = seededRandom(seed);
  const [lat0, lat1, lon0, lon1] = spread;
  const lats = Float64Array.from({ length: n }, () => lat0 + (lat1 - lat0) * random());
  const lons = Float64Array.from({ length: n }, () => lon0 + (lon1 - lon0) * random());
  return buildSitePoints(lats, lons);
}

describe('kd regions rebuilt from a published layout (what the console draws)', () => {
  for (const [label, spread] of [
    ['a clustered valley', [45, 46.5, -112, -110]],
    ['across the antimeridian', [-20, -10, 175, 185]],
  ] as const) {
    it(`lists equal the build's lists exactly: ${label}`, () => {
      const pts = points(300, 7, [...spread]);
      const { start, gap } = widestLongitudeGap(pts.lons);
      const built = buildKdLayout(pts, start - gap / 2, 8);
      const rebuilt = kdCandidateLists(pts, built.layout);
      expect(rebuilt.length).toBe(built.lists.length);
      rebuilt.forEach((list, i) => expect(Array.from(list)).toEqual(Array.from(built.lists[i]!)));
    });
  }

  it('leaf boxes tile the sphere and number regions as kdRegion does', () => {
    const pts = points(200, 11, [45, 46.5, -112, -110]);
    const { start, gap } = widestLongitudeGap(pts.lons);
    const { layout } = buildKdLayout(pts, start - gap / 2, 8);
    const boxes = kdLeafBoxes(layout);
    // Areas on the unit sphere: (sin latMax - sin latMin) * dLon in radians sum to 4 pi.
    const area = boxes.reduce((sum, b) => sum + (Math.sin((b.latMax * Math.PI) / 180) - Math.sin((b.latMin * Math.PI) / 180)) * (((b.offMax - b.offMin) * Math.PI) / 180), 0);
    expect(area).toBeCloseTo(4 * Math.PI, 9);
    const random = seededRandom(3);
    for (let t = 0; t < 500; t++) {
      const lat = -89 + 178 * random();
      const lon = -180 + 360 * random();
      const region = kdRegion(layout, lat, lon);
      const b = boxes[region]!;
      const off = (((lon - layout.lonStart) % 360) + 360) % 360;
      expect(lat >= b.latMin && lat <= b.latMax && off >= b.offMin && off <= b.offMax).toBe(true);
    }
  });

  it("a point's nearest site (brute force) is always in its region's rebuilt list", () => {
    const pts = points(250, 5, [45, 46.5, -112, -110]);
    const { start, gap } = widestLongitudeGap(pts.lons);
    const { layout } = buildKdLayout(pts, start - gap / 2, 8);
    const lists = kdCandidateLists(pts, layout);
    const random = seededRandom(9);
    for (let t = 0; t < 300; t++) {
      const lat = 44.5 + 2.5 * random();
      const lon = -112.5 + 3 * random();
      let best = 0;
      for (let s = 1; s < pts.lats.length; s++) {
        if (greatCircleMeters(lat, lon, pts.lats[s]!, pts.lons[s]!) < greatCircleMeters(lat, lon, pts.lats[best]!, pts.lons[best]!)) best = s;
      }
      expect(Array.from(lists[kdRegion(layout, lat, lon)]!)).toContain(best);
    }
  });
});
