import { greatCircleMeters } from '../../core/geo/distance.ts';

/**
 * The plain reference every nearest-site check compares with: a linear scan over the given
 * coordinates, least great-circle distance, ties to the lower index.
 */
export function bruteNearest(lats: ArrayLike<number>, lons: ArrayLike<number>, lat: number, lon: number): { index: number; distance: number } {
  let index = -1;
  let distance = Infinity;
  for (let i = 0; i < lats.length; i++) {
    const d = greatCircleMeters(lat, lon, lats[i]!, lons[i]!);
    if (d < distance) {
      distance = d;
      index = i;
    }
  }
  return { index, distance };
}
