import { describe, expect, it } from 'vitest';
import { siteBox } from '../../../core/geo/bounding-box.ts';
import { gridRegion } from '../../../core/geo/grid.ts';

describe('siteBox', () => {
  it('takes the short way across the antimeridian', () => {
    const box = siteBox([-17, -18, -21], [178, -179, 177.5]);
    expect(box.lonMin).toBeLessThan(177.5);
    expect(box.lonMax).toBeGreaterThan(181);
    expect(box.lonMax - box.lonMin).toBeLessThan(10);
    const layout = { kind: 'grid' as const, ...box, rows: 3, cols: 3 };
    for (const [lat, lon] of [[-17, 178], [-18, -179], [-21, 177.5]] as const) expect(gridRegion(layout, lat, lon)).toBeLessThan(9);
    expect(gridRegion(layout, -18, 0)).toBe(9);
  });

  it('becomes the whole circle when sites ring the globe, and clips at the poles', () => {
    // 36 sites 10 deg apart in longitude: the widened box wraps the globe.
    const box = siteBox([89.99, ...Array<number>(35).fill(10)], Array.from({ length: 36 }, (_, i) => i * 10 - 180));
    expect([box.lonMin, box.lonMax]).toEqual([-180, 180]);
    expect(box.latMax).toBe(90);
    const single = siteBox([-90], [45]);
    expect(single.latMin).toBe(-90);
    expect(single.latMax).toBeGreaterThan(-90);
  });
});
