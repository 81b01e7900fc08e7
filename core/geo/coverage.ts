import { widestLongitudeGap, type LatLonBox } from './bounding-box.ts';
import { greatCircleMeters } from './distance.ts';
import type { Manifest } from './manifest.ts';

/** A latitude/longitude box (GridLayout's conventions: lonMax may pass 180, lonMax <= lonMin + 360). */
export type CoverageBox = LatLonBox;

/**
 * A point more than this far outside the box around a dataset's sites is "far from coverage":
 * the nearest listed site may be very far, and closer services the list does not hold may exist.
 * 50 km is a judgement, not a standard: wide enough that a point just past the outermost site of
 * a regional list is not flagged, narrow enough that another region or continent always is.
 */
export const FAR_FROM_COVERAGE_METERS = 50_000;

/**
 * The smallest box holding the sites (longitudes the short way round, as siteBox takes them),
 * rounded outward to 0.1 degree so it tells no more than where the area lies.
 */
export function siteCoverage(lats: ArrayLike<number>, lons: ArrayLike<number>): CoverageBox {
  let latLo = 90, latHi = -90;
  for (let i = 0; i < lats.length; i++) {
    latLo = Math.min(latLo, lats[i]!);
    latHi = Math.max(latHi, lats[i]!);
  }
  const { start, gap } = widestLongitudeGap(lons);
  const west = down(start);
  const east = up(start + 360 - gap);
  const lonMin = normaliseLon(west);
  return { latMin: Math.max(-90, down(latLo)), latMax: Math.min(90, up(latHi)), lonMin, lonMax: lonMin + Math.min(360, Number((east - west).toFixed(1))) };
}

/** The box a manifest tells: the grid's or the veiled coarse grid's box, the adaptive layout's `coverage`; null if it tells none. */
export function manifestCoverage(manifest: Pick<Manifest, 'layout' | 'coverage'>): CoverageBox | null {
  const { layout } = manifest;
  if (layout.kind === 'grid' || layout.kind === 'veiled') return { latMin: layout.latMin, latMax: layout.latMax, lonMin: layout.lonMin, lonMax: layout.lonMax };
  return manifest.coverage ?? null;
}

/**
 * Great-circle meters from a point to the nearest point of the box, taken as the point with its
 * latitude and longitude each moved onto the box (exact on a meridian or parallel edge, and
 * close enough near corners for a 50 km threshold). 0 inside the box.
 */
export function metersOutside(box: CoverageBox, lat: number, lon: number): number {
  const clampedLat = Math.min(box.latMax, Math.max(box.latMin, lat));
  const off = eastOffset(lon, box.lonMin);
  const span = box.lonMax - box.lonMin;
  // Outside the span, the nearer of the two edges (west edge at offset 0 = 360, east at span).
  if (off <= span && clampedLat === lat) return 0;
  const clampedOff = off <= span ? off : off - span < 360 - off ? span : 0;
  return greatCircleMeters(lat, lon, clampedLat, box.lonMin + clampedOff);
}

/** True when the point lies more than FAR_FROM_COVERAGE_METERS outside the box; false when the box is unknown. */
export function isFarFromCoverage(box: CoverageBox | null, lat: number, lon: number): boolean {
  return box !== null && metersOutside(box, lat, lon) > FAR_FROM_COVERAGE_METERS;
}

const eastOffset = (lon: number, start: number) => (((lon - start) % 360) + 360) % 360;
const normaliseLon = (lon: number) => ((((lon + 180) % 360) + 360) % 360) - 180;
const down = (v: number) => Math.floor(v * 10 + 1e-9) / 10;
const up = (v: number) => Math.ceil(v * 10 - 1e-9) / 10;
