import { describe, expect, it } from 'vitest';
import { geoAzimuthalEquidistant } from 'd3-geo';
import { EARTH_MEAN_RADIUS_M } from '../../core/geo/distance.ts';
import { d3Projection } from '../../console/src/map/geography.ts';
import { azimuthalEquidistant, equirectangular, type Projection } from '../../console/src/map/projection.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';

// The map draws sites and regions with its own projections (projection.ts) and land, borders and
// graticule through d3-geo (geography.ts). Both must put a point on the same pixel, or the coast
// would sit beside the sites. The azimuthal case is also checked against d3-geo's own
// geoAzimuthalEquidistant (npm), an outside implementation of Snyder's formulas.

/** d3's planar output at scale R and no translation is [x, -y] in metres (its y grows downward). */
function viaD3(p: Projection, lat: number, lon: number): [number, number] {
  const [x, y] = d3Projection(p).scale(EARTH_MEAN_RADIUS_M).translate([0, 0])([lon, lat])!;
  return [x, -y];
}

function points(seed: number, lat0: number, lon0: number, spanLat: number, spanLon: number): Array<[number, number]> {
  const random = seededRandom(seed);
  return Array.from({ length: 200 }, () => [
    Math.max(-89.9, Math.min(89.9, lat0 + (random() - 0.5) * 2 * spanLat)),
    lon0 + (random() - 0.5) * 2 * spanLon,
  ]);
}

describe('the land layer lands where the sites are', () => {
  it.each([
    [-76, 60],
    [0, 0],
    [45.5, -100.2],
    [89, 10],
  ])('azimuthal equidistant centred at %f, %f: the console, its d3 twin and d3-geo agree to a millimetre', (lat0, lon0) => {
    const p = azimuthalEquidistant(lat0, lon0);
    const reference = geoAzimuthalEquidistant().rotate([-lon0, -lat0]).scale(EARTH_MEAN_RADIUS_M).translate([0, 0]);
    for (const [lat, lon] of points(lat0 * 1000 + lon0, lat0, lon0, 60, 120)) {
      const [x, y] = p.forward(lat, lon);
      const [dx, dy] = viaD3(p, lat, lon);
      const [rx, ry] = reference([lon, lat])!;
      expect(Math.hypot(dx - x, dy - y)).toBeLessThan(1e-3);
      expect(Math.hypot(rx - x, -ry - y)).toBeLessThan(1e-3);
    }
  });

  it.each([
    [65.5, -35],
    [-20, 179],
    [0, -170],
  ])('equirectangular with standard parallel %f, centre %f: the console and its d3 twin agree to a millimetre, across the seam too', (lat0, lon0) => {
    const p = equirectangular(lat0, lon0);
    for (const [lat, lon] of points(7 + lat0, lat0, lon0, 30, 179)) {
      const [x, y] = p.forward(lat, lon);
      const [dx, dy] = viaD3(p, lat, lon);
      expect(Math.hypot(dx - x, dy - y)).toBeLessThan(1e-3);
    }
  });
});
