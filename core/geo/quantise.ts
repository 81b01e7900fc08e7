/**
 * Fixed-point coordinates, as stored in candidate slots and seen by the client.
 *
 * Latitude: 24 bits over [-90, 90], step 180 / 2^24 deg = 1.0729e-5 deg, about 1.19 m of
 * meridian. Rounded to nearest, so the error is at most half a step (0.6 m); 90 itself is clamped
 * to the top code 2^24 - 1, one step (1.19 m) short of the pole.
 * Longitude: 25 bits over [-180, 180), step 360 / 2^25 deg = 1.0729e-5 deg, about 1.19 m along
 * the equator and less toward the poles. Rounded to nearest, taken modulo 2^25, so 180 and -180
 * share code 0 (the same meridian); the error is at most half a step.
 *
 * Invariant: dequantise(quantise(x)) is the coordinate the build uses for every distance, so the
 * build and the client reason about the same points.
 */
export const LAT_BITS = 24;
export const LON_BITS = 25;
const LAT_CODES = 2 ** LAT_BITS;
const LON_CODES = 2 ** LON_BITS;

/** Latitude in degrees (must lie in [-90, 90]) to a code in [0, 2^24). Throws RangeError. */
export function quantiseLat(lat: number): number {
  if (!(lat >= -90 && lat <= 90)) throw new RangeError(`quantiseLat: expected lat in [-90, 90], got ${lat}`);
  return Math.min(LAT_CODES - 1, Math.round(((lat + 90) * LAT_CODES) / 180));
}

/** Longitude in degrees (must lie in [-180, 180]) to a code in [0, 2^25). Throws RangeError. */
export function quantiseLon(lon: number): number {
  if (!(lon >= -180 && lon <= 180)) throw new RangeError(`quantiseLon: expected lon in [-180, 180], got ${lon}`);
  return Math.round(((lon + 180) * LON_CODES) / 360) % LON_CODES;
}

/** Code in [0, 2^24) to latitude in degrees. Throws RangeError for anything else. */
export function dequantiseLat(code: number): number {
  if (!Number.isInteger(code) || code < 0 || code >= LAT_CODES) {
    throw new RangeError(`dequantiseLat: expected an integer in [0, ${LAT_CODES}), got ${code}`);
  }
  return (code * 180) / LAT_CODES - 90;
}

/** Code in [0, 2^25) to longitude in degrees, in [-180, 180). Throws RangeError otherwise. */
export function dequantiseLon(code: number): number {
  if (!Number.isInteger(code) || code < 0 || code >= LON_CODES) {
    throw new RangeError(`dequantiseLon: expected an integer in [0, ${LON_CODES}), got ${code}`);
  }
  return (code * 360) / LON_CODES - 180;
}
