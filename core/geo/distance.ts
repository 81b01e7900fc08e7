/**
 * Great-circle geometry on a sphere. Every distance in nearveil is measured here, so the build
 * and the client agree on what "nearest" means.
 */

/**
 * Mean Earth radius R1 = (2a + b) / 3 of the ellipsoid, 6,371,008.8 m, as recommended by the
 * IUGG (H. Moritz, "Geodetic Reference System 1980", Bulletin Geodesique 54, and the IUGG
 * resolution that adopted it). The design fixes this value.
 */
export const EARTH_MEAN_RADIUS_M = 6371008.8;

/** Radians per degree. */
export const RAD = Math.PI / 180;

/**
 * Great-circle distance in metres, from the central angle atan2(|u x v|, u . v) written in
 * latitudes and longitudes (the spherical case of Vincenty's formula; common practice). Unlike
 * haversine (asin) or the law of cosines (acos) it keeps full precision at every separation,
 * antipodes included, so the triangle inequality holds to rounding everywhere.
 * Inputs are degrees; no range check (callers validate), NaN in gives NaN out.
 */
export function greatCircleMeters(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const phi1 = lat1 * RAD;
  const phi2 = lat2 * RAD;
  const dLon = (lon2 - lon1) * RAD;
  const cos1 = Math.cos(phi1);
  const cos2 = Math.cos(phi2);
  const sin1 = Math.sin(phi1);
  const sin2 = Math.sin(phi2);
  const cosDLon = Math.cos(dLon);
  const cross = Math.hypot(cos2 * Math.sin(dLon), cos1 * sin2 - sin1 * cos2 * cosDLon);
  const dot = sin1 * sin2 + cos1 * cos2 * cosDLon;
  return EARTH_MEAN_RADIUS_M * Math.atan2(cross, dot);
}

/** Unit vector (x, y, z) of a point given in degrees; x toward (0, 0), z toward the north pole. */
export function unitVector(lat: number, lon: number): [number, number, number] {
  const cosLat = Math.cos(lat * RAD);
  return [cosLat * Math.cos(lon * RAD), cosLat * Math.sin(lon * RAD), Math.sin(lat * RAD)];
}

/**
 * Chord length (on the unit sphere) of a central angle in radians; clamped to [0, pi] first.
 * Chord length is strictly increasing in the angle on [0, pi], which is why a kd-tree over
 * unit vectors answers great-circle nearest-site questions.
 */
export function chordOfAngle(angle: number): number {
  return 2 * Math.sin(Math.min(Math.PI, Math.max(0, angle)) / 2);
}

/** Central angle in radians of a unit-sphere chord; the chord is clamped to [0, 2]. */
export function angleOfChord(chord: number): number {
  return 2 * Math.asin(Math.min(1, Math.max(0, chord) / 2));
}
