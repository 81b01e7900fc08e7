import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { distance as geokdbushDistance } from 'geokdbush';
import { angleOfChord, chordOfAngle, EARTH_MEAN_RADIUS_M, greatCircleMeters, unitVector } from '../../../core/geo/distance.ts';

const lat = fc.double({ min: -90, max: 90, noNaN: true });
const lon = fc.double({ min: -180, max: 180, noNaN: true });

/**
 * How closely an asin-based reference (haversine, or an angle from a chord) can agree with an exact
 * distance d: asin near 1 resolves angles only to about sqrt(2^-52) = 1.5e-8 rad, which is 0.1 m
 * of arc within a few kilometres of the antipode (numerical analysis, common practice).
 */
const asinReferenceTolerance = (d: number, usual: number) => (d > EARTH_MEAN_RADIUS_M * (Math.PI - 1e-3) ? 0.2 : usual);

describe('greatCircleMeters', () => {
  it('matches geokdbush distance (haversine, R = 6371 km) once scaled to our radius', () => {
    // Source: npm geokdbush 2.1.0, `distance(lng1, lat1, lng2, lat2)` in kilometres, radius 6371 km.
    fc.assert(
      fc.property(lat, lon, lat, lon, (a, b, c, d) => {
        const theirs = geokdbushDistance(b, a, d, c) * 1000 * (EARTH_MEAN_RADIUS_M / 6371000);
        const ours = greatCircleMeters(a, b, c, d);
        expect(Math.abs(ours - theirs)).toBeLessThan(asinReferenceTolerance(ours, 1e-3));
      }),
      { numRuns: 500, seed: 20261203 },
    );
  });

  it('gives the LAX-JFK central angle of the worked example in the Aviation Formulary', () => {
    // From memory: Ed Williams, "Aviation Formulary", worked example LAX (33deg57'N, 118deg24'W)
    // to JFK (40deg38'N, 73deg47'W): d = 0.623585 radians (= 2144 nm). An angle, so radius-free.
    const d = greatCircleMeters(33 + 57 / 60, -(118 + 24 / 60), 40 + 38 / 60, -(73 + 47 / 60));
    expect(d / EARTH_MEAN_RADIUS_M).toBeCloseTo(0.623585, 5);
  });

  it('measures a degree of the equator and half a great circle as arcs of the sphere', () => {
    // Arc length = R * angle (geometry of the sphere, common practice).
    expect(greatCircleMeters(0, 10, 0, 11)).toBeCloseTo((EARTH_MEAN_RADIUS_M * Math.PI) / 180, 6);
    expect(greatCircleMeters(90, 0, -90, 0)).toBeCloseTo(EARTH_MEAN_RADIUS_M * Math.PI, 6);
    expect(greatCircleMeters(0, 0, 0, 180)).toBeCloseTo(EARTH_MEAN_RADIUS_M * Math.PI, 6);
    // Near-antipodal points must give a finite distance.
    expect(Number.isNaN(greatCircleMeters(45, 30, -45, -150 + 1e-13))).toBe(false);
  });

  it('is symmetric and obeys the triangle inequality', () => {
    // Found by fast-check against the earlier haversine form: a near-antipodal pair that broke the
    // triangle inequality by a millimetre. Kept as a fixed case.
    const [a, b, c, d, e, f] = [0, 0, 0, 179.99999879258175, 0.00009957175184267843, 0];
    expect(greatCircleMeters(a, b, c, d)).toBeLessThanOrEqual(greatCircleMeters(a, b, e, f) + greatCircleMeters(e, f, c, d) + 1e-6);
    fc.assert(
      fc.property(lat, lon, lat, lon, lat, lon, (a, b, c, d, e, f) => {
        const ab = greatCircleMeters(a, b, c, d);
        expect(Math.abs(ab - greatCircleMeters(c, d, a, b))).toBeLessThan(1e-6);
        expect(ab).toBeLessThanOrEqual(greatCircleMeters(a, b, e, f) + greatCircleMeters(e, f, c, d) + 1e-6);
      }),
      { numRuns: 2000, seed: 20261203 },
    );
  });
});

describe('unit vectors and chords', () => {
  it('chord length of two unit vectors agrees with the great-circle angle', () => {
    fc.assert(
      fc.property(lat, lon, lat, lon, (a, b, c, d) => {
        const p = unitVector(a, b);
        const q = unitVector(c, d);
        const chord = Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
        expect(Math.hypot(...p)).toBeCloseTo(1, 12);
        const exact = greatCircleMeters(a, b, c, d);
        expect(Math.abs(angleOfChord(chord) * EARTH_MEAN_RADIUS_M - exact)).toBeLessThan(asinReferenceTolerance(exact, 0.005));
        expect(chordOfAngle(angleOfChord(chord))).toBeCloseTo(chord, 12);
      }),
      { numRuns: 2000, seed: 20261203 },
    );
  });
});
