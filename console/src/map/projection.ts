import { widestLongitudeGap } from '../../../core/geo/bounding-box.ts';
import { EARTH_MEAN_RADIUS_M, RAD } from '../../../core/geo/distance.ts';

/**
 * Map projections for the console, chosen from the sites themselves. Coordinates out are metres
 * on the sphere of core/geo/distance.ts (x east, y north).
 *
 * - A regional table (no site poleward of 70 degrees, longitudes within 120 degrees): the
 *   equirectangular projection with its standard parallel at the middle latitude. Distances are
 *   true along the meridians and along that parallel, so a valley or a country looks right.
 * - Anything else (polar or worldwide): the azimuthal equidistant projection centred on the
 *   sites; distances from the centre are true great-circle distances and the poles are no seam.
 */
export interface Projection {
  readonly name: string;
  /** Which of the two (map/geography.ts makes the same one in d3-geo for land and borders). */
  readonly kind: 'equirectangular' | 'azimuthal-equidistant';
  readonly lat0: number;
  readonly lon0: number;
  forward(lat: number, lon: number): [number, number];
  /** As forward, but a longitude is taken as given (not wrapped): for shapes kept whole across the seam. */
  forwardRaw(lat: number, lon: number): [number, number];
  /** null for points off the map (beyond the antipode's rim). */
  inverse(x: number, y: number): [number, number] | null;
  /** Longitude shifted by whole turns so that it lies within 180 degrees of `near`. */
  unwrap(lon: number, near: number): number;
}

const wrap180 = (d: number) => ((((d + 180) % 360) + 360) % 360) - 180;

export function chooseProjection(lats: ArrayLike<number>, lons: ArrayLike<number>): Projection {
  let latLo = Infinity;
  let latHi = -Infinity;
  for (let i = 0; i < lats.length; i++) {
    latLo = Math.min(latLo, lats[i]!);
    latHi = Math.max(latHi, lats[i]!);
  }
  if (lats.length === 0) [latLo, latHi] = [0, 0];
  const { start, gap } = lons.length > 0 ? widestLongitudeGap(lons) : { start: 0, gap: 360 };
  const lonSpan = 360 - gap;
  const lon0 = wrap180(start + lonSpan / 2);
  const lat0 = (latLo + latHi) / 2;
  if (Math.max(Math.abs(latLo), Math.abs(latHi)) <= 70 && lonSpan <= 120) return equirectangular(lat0, lon0);
  return azimuthalEquidistant(lat0, lon0);
}

export function equirectangular(lat0: number, lon0: number): Projection {
  const k = Math.cos(lat0 * RAD) * EARTH_MEAN_RADIUS_M * RAD;
  const m = EARTH_MEAN_RADIUS_M * RAD;
  return {
    name: `equirectangular, standard parallel ${lat0.toFixed(2)}°`,
    kind: 'equirectangular',
    lat0,
    lon0,
    forward: (lat, lon) => [wrap180(lon - lon0) * k, lat * m],
    forwardRaw: (lat, lon) => [(lon - lon0) * k, lat * m],
    inverse: (x, y) => {
      const lat = y / m;
      const lon = lon0 + x / k;
      return Math.abs(lat) > 90 || Math.abs(x / k) > 180 ? null : [lat, wrap180(lon)];
    },
    unwrap: (lon, near) => near + wrap180(lon - near),
  };
}

/** Azimuthal equidistant on the sphere (Snyder, Map Projections: A Working Manual, 1987, eq. 25-2 to 25-4). */
export function azimuthalEquidistant(lat0: number, lon0: number): Projection {
  const phi1 = lat0 * RAD;
  const sin1 = Math.sin(phi1);
  const cos1 = Math.cos(phi1);
  const R = EARTH_MEAN_RADIUS_M;
  return {
    name: `azimuthal equidistant, centred at ${lat0.toFixed(1)}°, ${lon0.toFixed(1)}°`,
    kind: 'azimuthal-equidistant',
    lat0,
    lon0,
    forward(lat, lon) {
      const phi = lat * RAD;
      const dl = (lon - lon0) * RAD;
      const cosc = Math.max(-1, Math.min(1, sin1 * Math.sin(phi) + cos1 * Math.cos(phi) * Math.cos(dl)));
      const c = Math.acos(cosc);
      const k = c < 1e-12 ? 1 : c / Math.sin(c);
      if (!Number.isFinite(k)) return [0, -Math.PI * R]; // the antipode: drawn at the rim
      return [R * k * Math.cos(phi) * Math.sin(dl), R * k * (cos1 * Math.sin(phi) - sin1 * Math.cos(phi) * Math.cos(dl))];
    },
    forwardRaw(lat, lon) {
      return this.forward(lat, lon);
    },
    inverse(x, y) {
      const rho = Math.hypot(x, y);
      const c = rho / R;
      if (c > Math.PI) return null;
      if (rho < 1e-9) return [lat0, lon0];
      const lat = Math.asin(Math.cos(c) * sin1 + (y * Math.sin(c) * cos1) / rho) / RAD;
      const lon = lon0 + Math.atan2(x * Math.sin(c), rho * cos1 * Math.cos(c) - y * sin1 * Math.sin(c)) / RAD;
      return [lat, wrap180(lon)];
    },
    unwrap: (lon, near) => near + wrap180(lon - near),
  };
}
