import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../../../core/geo/quantise.ts';
import { greatCircleMeters } from '../../../core/geo/distance.ts';

const LAT_STEP = 180 / 2 ** 24;

describe('quantised coordinates', () => {
  it('round-trips within half a step (about 0.6 m) and the codes fit their widths', () => {
    fc.assert(
      fc.property(fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true }), (lat, lon) => {
        const a = quantiseLat(lat);
        const b = quantiseLon(lon);
        expect(a).toBeGreaterThanOrEqual(0);
        expect(a).toBeLessThan(2 ** 24);
        expect(b).toBeGreaterThanOrEqual(0);
        expect(b).toBeLessThan(2 ** 25);
        if (lat < 90 - LAT_STEP) expect(Math.abs(dequantiseLat(a) - lat)).toBeLessThanOrEqual(LAT_STEP / 2 + 1e-12);
        // Ground error of the pair: about 0.85 m at most (half-steps of 1.19 m each way), 1.19 m at
        // the north pole, which is clamped one step short.
        expect(greatCircleMeters(lat, lon, dequantiseLat(a), dequantiseLon(b))).toBeLessThan(1.2);
      }),
      { numRuns: 500, seed: 20261203 },
    );
  });

  it('treats 180 and -180 as one meridian and clamps the north pole to the top code', () => {
    expect(quantiseLon(180)).toBe(quantiseLon(-180));
    expect(dequantiseLon(quantiseLon(180))).toBe(-180);
    expect(quantiseLat(90)).toBe(2 ** 24 - 1);
    expect(quantiseLat(-90)).toBe(0);
    expect(dequantiseLat(2 ** 23)).toBe(0);
  });

  it('refuses out-of-range input with RangeError', () => {
    expect(() => quantiseLat(90.0001)).toThrow(RangeError);
    expect(() => quantiseLat(Number.NaN)).toThrow(/quantiseLat: expected lat in \[-90, 90\], got NaN/);
    expect(() => quantiseLon(-181)).toThrow(RangeError);
    expect(() => dequantiseLat(2 ** 24)).toThrow(RangeError);
    expect(() => dequantiseLon(-1)).toThrow(RangeError);
  });
});
