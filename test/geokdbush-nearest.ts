import { around } from 'geokdbush';
import KDBush from 'kdbush';

/**
 * The site nearest to (lat, lon) by great-circle distance, as geokdbush (npm) finds it: the outside
 * reference tests compare the private lookup's site id with.
 */
export function geokdbushNearest<S extends { lat: number; lon: number }>(sites: readonly S[], lat: number, lon: number): S {
  const index = new KDBush(sites.length);
  for (const s of sites) index.add(s.lon, s.lat);
  index.finish();
  return sites[around(index, lon, lat, 1)[0]!]!;
}
