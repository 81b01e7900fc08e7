import { seededRandom } from './seeded-random.ts';

/**
 * Invented test and bench data only: `count` sites clustered around `towns` invented towns spread
 * over a box of `spanDeg` degrees of latitude (and 1.5 times that of longitude) in an empty
 * stretch of the South Pacific, each town a Gaussian blob 0.5 to 8.5 km wide. The shape of a
 * national list of clinics or pharmacies (dense towns, empty land between), with no real place.
 * Columns: id, name, lat, lon and three detail columns. Deterministic for a seed.
 */
export function clusteredTownsCsv(count: number, options: { towns?: number; spanDeg?: number; seed?: number } = {}): string {
  const { towns = 120, spanDeg = 4, seed = 7 } = options;
  const random = seededRandom(seed);
  const centres = Array.from({ length: towns }, () => [-38 + random() * spanDeg, -128 + random() * spanDeg * 1.5, 0.5 + random() * 8] as const);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
  const lines = ['id,name,lat,lon,kind,phone,hours'];
  for (let i = 0; i < count; i++) {
    const [lat, lon, km] = centres[Math.floor(random() * towns)]!;
    const y = lat + (gauss() * km) / 111.2;
    const x = lon + (gauss() * km) / (111.2 * Math.cos((lat * Math.PI) / 180));
    // Phone numbers in a form that belongs to no numbering plan.
    lines.push(`T-${i},Town site ${i},${y.toFixed(6)},${x.toFixed(6)},Clinic,000-${String(i % 10000).padStart(4, '0')},Mon-Fri 08:00-18:00`);
  }
  return lines.join('\n') + '\n';
}
