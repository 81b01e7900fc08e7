import { describe, expect, it } from 'vitest';
import { geoUri } from '../../finder/src/geo-uri.ts';

/**
 * The maps link of the finder page against RFC 5870 ("A Uniform Resource Identifier for
 * Geographic Locations ('geo' URI)", IETF, June 2010). Examples below are the RFC's own, quoted
 * from memory with their sections. Numbers are compared as the RFC's section 3.4.4 compares
 * URIs (from memory): coordinates are equal when their numeric values are, so "48.2010" and
 * "48.201" name one point. `parseGeo` is a plain reading of the RFC's ABNF written for this test.
 */
function parseGeo(uri: string): { lat: number; lon: number; params: string } {
  // geo-URI = "geo:" coordinates p ; coordinates = coord-a "," coord-b [ "," coord-c ] (section 3.3, from memory)
  const match = /^geo:(-?\d+(?:\.\d+)?),(-?\d+(?:\.\d+)?)(?:,(-?\d+(?:\.\d+)?))?((?:;[^;]*)*)$/.exec(uri);
  if (!match) throw new Error(`not a geo URI by RFC 5870's grammar: ${uri}`);
  return { lat: Number(match[1]), lon: Number(match[2]), params: match[4] ?? '' };
}

describe('geoUri (RFC 5870)', () => {
  it('writes the example of RFC 5870 section 1 exactly: geo:13.4125,103.8667', () => {
    expect(geoUri(13.4125, 103.8667)).toBe('geo:13.4125,103.8667');
  });

  it('names the points of the RFC 5870 section 6 examples (altitude and parameters are not written)', () => {
    // Section 6.2 (from memory): geo:48.2010,16.3695,183 and geo:48.198634,16.371648;crs=wgs84;u=40
    for (const example of ['geo:48.2010,16.3695,183', 'geo:48.198634,16.371648;crs=wgs84;u=40']) {
      const reference = parseGeo(example);
      const ours = geoUri(reference.lat, reference.lon);
      expect(parseGeo(ours), example).toEqual({ lat: reference.lat, lon: reference.lon, params: '' });
    }
    expect(geoUri(48.201, 16.3695)).toBe('geo:48.201,16.3695');
    expect(geoUri(48.198634, 16.371648)).toBe('geo:48.198634,16.371648');
  });

  it('writes the pole with longitude 0, as RFC 5870 section 3.4.2 recommends (from memory: geo:90,-22.43 and geo:90,46 are one point)', () => {
    expect(geoUri(90, -22.43)).toBe('geo:90,0');
    expect(geoUri(-90, 46)).toBe('geo:-90,0');
    expect(geoUri(89.9999996, 12)).toBe('geo:90,0'); // rounds onto the pole
  });

  it('keeps at most six decimals, rounded, with trailing zeros dropped', () => {
    expect(geoUri(-75.930_000_4, 60.520_000_6)).toBe('geo:-75.93,60.520001');
    expect(geoUri(-75.123_456_789, 60.987_654_321)).toBe('geo:-75.123457,60.987654');
    expect(geoUri(1.5, -2.25)).toBe('geo:1.5,-2.25');
    expect(geoUri(10, 100)).toBe('geo:10,100');
    for (const uri of [geoUri(-75.123_456_789, 60.987_654_321), geoUri(0.000_000_4, -179.999_999_9)]) {
      for (const part of uri.slice(4).split(',')) expect(part.split('.')[1]?.length ?? 0, uri).toBeLessThanOrEqual(6);
    }
  });

  it('writes negative coordinates with a leading minus (south, west) and never "-0"', () => {
    expect(geoUri(-33.8675, -70.6517)).toBe('geo:-33.8675,-70.6517');
    expect(geoUri(-0, -0)).toBe('geo:0,0');
    expect(geoUri(-0.000_000_4, -0.000_000_1)).toBe('geo:0,0');
  });

  it('writes the edges of the ranges and no query parameters', () => {
    expect(geoUri(0, 180)).toBe('geo:0,180');
    expect(geoUri(0, -180)).toBe('geo:0,-180');
    expect(geoUri(45, 179.999_999_9)).toBe('geo:45,180');
    expect(geoUri(-75.93, 60.52)).not.toMatch(/[;?&]/);
  });

  it('refuses points that are not on the globe, with the value in the message', () => {
    expect(() => geoUri(90.000_001, 0)).toThrow(RangeError);
    expect(() => geoUri(-91, 0)).toThrow(/latitude in -90\.\.90, got -91/);
    expect(() => geoUri(0, 180.5)).toThrow(/longitude in -180\.\.180, got 180\.5/);
    expect(() => geoUri(Number.NaN, 0)).toThrow(TypeError);
    expect(() => geoUri(0, Number.POSITIVE_INFINITY)).toThrow(TypeError);
  });
});
