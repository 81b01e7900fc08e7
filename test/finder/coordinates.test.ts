import { describe, expect, it } from 'vitest';
import { checkCoordinates } from '../../finder/src/coordinates.ts';
import { distanceText } from '../../finder/src/distance-text.ts';
import { errorText } from '../../finder/src/error-text.ts';
import { NearveilError } from '../../sdk/browser.ts';

describe('typed coordinates', () => {
  it('reads decimal degrees, signs, the typographic minus and spaces around them', () => {
    expect(checkCoordinates(' -75.93 ', '60.52')).toEqual({ ok: true, point: { lat: -75.93, lon: 60.52 } });
    expect(checkCoordinates('\u221275.5', '+.5')).toEqual({ ok: true, point: { lat: -75.5, lon: 0.5 } });
    expect(checkCoordinates('90', '-180')).toEqual({ ok: true, point: { lat: 90, lon: -180 } });
    expect(Object.is((checkCoordinates('-0', '0') as { point: { lat: number } }).point.lat, 0)).toBe(true);
  });

  it('takes a pasted "lat, lon" pair or a copied geo URI from the latitude field when longitude is empty', () => {
    expect(checkCoordinates('-75.93, 60.52', '')).toEqual({ ok: true, point: { lat: -75.93, lon: 60.52 }, splitLon: '60.52' });
    expect(checkCoordinates('-75.93;60.52', '')).toMatchObject({ ok: true, point: { lat: -75.93, lon: 60.52 } });
    expect(checkCoordinates('-75.93 60.52', '')).toMatchObject({ ok: true, point: { lat: -75.93, lon: 60.52 } });
    expect(checkCoordinates('geo:13.4125,103.8667;u=35', '')).toMatchObject({ ok: true, point: { lat: 13.4125, lon: 103.8667 } });
    expect(checkCoordinates('-75.93, 60.52', '61')).toEqual({ ok: false, latError: expect.stringMatching(/holds two numbers/) });
  });

  it('refuses out-of-range values, other formats and empty fields with a message that says what to type', () => {
    expect(checkCoordinates('', '')).toEqual({ ok: false, latError: 'Enter the latitude.', lonError: 'Enter the longitude.' });
    expect(checkCoordinates('91', '100')).toEqual({ ok: false, latError: 'Latitude must be between -90 and 90 degrees; 91 is outside that range.' });
    expect(checkCoordinates('0', '-180.5')).toEqual({ ok: false, lonError: 'Longitude must be between -180 and 180 degrees; -180.5 is outside that range.' });
    expect(checkCoordinates('51,5', '0')).toEqual({ ok: false, latError: 'Latitude: use a point as the decimal mark, such as 51.5.' });
    expect(checkCoordinates('12°30\'N', '1')).toMatchObject({ ok: false, latError: expect.stringMatching(/not degrees and minutes or compass letters/) });
    expect(checkCoordinates('1e2', '1')).toMatchObject({ ok: false, latError: expect.stringMatching(/"1e2" is not a number/) });
    expect(checkCoordinates('abc', '0x10')).toMatchObject({ ok: false, latError: expect.stringMatching(/"abc" is not a number/), lonError: expect.stringMatching(/"0x10" is not a number/) });
    // Longitude typed first: the latitude is out of range, and the message suggests the swap.
    expect(checkCoordinates('120.5', '45')).toMatchObject({ ok: false, latError: expect.stringMatching(/may be swapped/) });
  });
});

describe('distance and error wording', () => {
  it('writes metres under 1 km and km with one decimal from there', () => {
    expect(distanceText(0)).toBe('0 m');
    expect(distanceText(999.4)).toBe('999 m');
    expect(distanceText(999.6)).toBe('1.0 km');
    expect(distanceText(1049)).toBe('1.0 km');
    expect(distanceText(1050.1)).toBe('1.1 km');
    expect(distanceText(12_345_678)).toBe('12,345.7 km');
    expect(() => distanceText(-1)).toThrow(RangeError);
  });

  it('says each refusal in plain words', () => {
    expect(errorText(new NearveilError(429, 'rate_limited', 'x'))).toBe('Too many searches from this device just now. Wait a minute, then try again.');
    const withWait = new NearveilError(429, 'rate_limited', 'x', 'requestsPerMinute', [], 41.2);
    expect(errorText(withWait)).toBe('Too many searches from this device just now. Try again in 42 seconds.');
    expect(errorText(new NearveilError(429, 'quota_exceeded', 'x'))).toMatch(/limit of searches for this month/);
    expect(errorText(new NearveilError(403, 'origin_not_allowed', 'x'))).toMatch(/cannot be searched from this web address/);
    expect(errorText(new NearveilError(0, 'unreachable', 'cannot reach'))).toMatch(/could not be reached/);
    expect(errorText(new NearveilError(402, 'payment_required', 'x'))).toMatch(/account limits/);
    expect(errorText(new NearveilError(503, 'part_failed', 'x'))).toMatch(/had a problem/);
    expect(errorText(new Error('boom'))).toMatch(/Reload the page/);
  });
});
