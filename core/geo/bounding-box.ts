import { RAD } from './distance.ts';

/** A latitude/longitude box with the conventions of GridLayout (lonMax may exceed 180). */
export interface LatLonBox {
  readonly latMin: number;
  readonly latMax: number;
  readonly lonMin: number;
  readonly lonMax: number;
}

/** Margin added on every side: this share of the span plus a floor (degrees of latitude). */
export const MARGIN_SHARE = 0.02;
export const MARGIN_FLOOR_DEG = 0.05;

/**
 * The smallest box holding every point, widened by the margin. Longitude takes the shorter way
 * round: the box starts just east of the widest gap between site longitudes, so a set on both
 * sides of the antimeridian gets lonMax above 180. Latitude is clipped to [-90, 90]; when the
 * widened box would wrap the globe it becomes the whole circle [-180, 180].
 * Requires at least one point; inputs in range.
 */
export function siteBox(lats: ArrayLike<number>, lons: ArrayLike<number>): LatLonBox {
  const n = lats.length;
  if (n < 1) throw new RangeError('siteBox: expected at least one point, got 0');
  let latLo = Infinity;
  let latHi = -Infinity;
  for (let i = 0; i < n; i++) {
    latLo = Math.min(latLo, lats[i]!);
    latHi = Math.max(latHi, lats[i]!);
  }
  const { start, gap } = widestLongitudeGap(lons);
  const lonSpan = 360 - gap;
  const latMargin = MARGIN_SHARE * (latHi - latLo) + MARGIN_FLOOR_DEG;
  // Longitude degrees shrink toward the poles; widen the floor so the margin is similar in metres.
  const midCos = Math.max(0.05, Math.cos(((latLo + latHi) / 2) * RAD));
  const lonMargin = MARGIN_SHARE * lonSpan + MARGIN_FLOOR_DEG / midCos;
  const latMin = Math.max(-90, latLo - latMargin);
  const latMax = Math.min(90, latHi + latMargin);
  if (lonSpan + 2 * lonMargin >= 360) return { latMin, latMax, lonMin: -180, lonMax: 180 };
  let lonMin = start - lonMargin;
  if (lonMin < -180) lonMin += 360;
  return { latMin, latMax, lonMin, lonMax: lonMin + lonSpan + 2 * lonMargin };
}

/**
 * The widest gap between site longitudes, going east: it ends at `start` (a site longitude) and
 * is `gap` degrees wide. Its middle is the seam where the adaptive layout starts its longitudes.
 */
export function widestLongitudeGap(lons: ArrayLike<number>): { start: number; gap: number } {
  const n = lons.length;
  if (n < 1) throw new RangeError('widestLongitudeGap: expected at least one longitude, got 0');
  const sorted = Float64Array.from(lons, (l) => (l >= 180 ? l - 360 : l)).sort();
  let gap = sorted[0]! + 360 - sorted[n - 1]!;
  let start = sorted[0]!;
  for (let i = 1; i < n; i++) {
    const g = sorted[i]! - sorted[i - 1]!;
    if (g > gap) {
      gap = g;
      start = sorted[i]!;
    }
  }
  return { start, gap };
}
