import { geoContains, type GeoPermissibleObjects } from 'd3-geo';

/** At most this many sites are tested (evenly spread over the table): a hint, not a census. */
const SAMPLE = 1000;

/** The share of sampled points (lat, lon) that lie on `land` (any GeoJSON object d3-geo can test). */
export function landShare(land: GeoPermissibleObjects, lats: ArrayLike<number>, lons: ArrayLike<number>): number {
  const n = lats.length;
  if (n === 0) return 1;
  const step = Math.max(1, n / SAMPLE);
  let tested = 0;
  let onLand = 0;
  for (let x = 0; x < n; x += step) {
    const i = Math.floor(x);
    tested++;
    if (geoContains(land, [lons[i]!, lats[i]!])) onLand++;
  }
  return onLand / tested;
}

/**
 * Warnings for a table whose sites mostly fall in the sea (more than half of a sample): likely
 * swapped lat and lon when swapping puts most of them on land, or otherwise wrong coordinates.
 * A small-scale land map misplaces coasts by kilometres, so coastal sets can trip it: these are
 * warnings, never refusals.
 */
export function coordinateWarnings(land: GeoPermissibleObjects, lats: ArrayLike<number>, lons: ArrayLike<number>): string[] {
  const share = landShare(land, lats, lons);
  if (share >= 0.5) return [];
  const seaPercent = Math.round((1 - share) * 100);
  const swappable = Array.from(lons).every((lon) => Math.abs(lon) <= 90);
  const swappedShare = swappable ? landShare(land, lons, lats) : 0;
  if (swappedShare >= 0.8) {
    return [`lat and lon may be swapped: ${seaPercent}% of the sites fall in the sea, and with the two columns swapped ${Math.round(swappedShare * 100)}% would be on land`];
  }
  return [`${seaPercent}% of the sites fall in the sea on a world map of land: check the lat and lon columns (lat is north-south, -90 to 90; lon is east-west, -180 to 180)`];
}
