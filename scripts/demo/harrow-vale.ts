import { seededRandom as prng } from './seeded-random.ts';
import { csvField } from '../../core/csv-writing/csv-field.ts';

/**
 * Demo data only: an invented region, "Harrow Vale", with invented towns and invented care
 * sites clustered around them. Coordinates are arbitrary points chosen for the demo; no real
 * place or service is described. Deterministic: the same seed gives the same file.
 */
const TOWNS: ReadonlyArray<readonly [name: string, lat: number, lon: number, weight: number, spreadKm: number]> = [
  ['Aldermoor', 45.62, -111.42, 22, 6],
  ['Brackenfold', 45.48, -111.95, 14, 5],
  ['Cindervale', 45.91, -111.18, 10, 4],
  ['Dunmarrow', 45.27, -111.6, 9, 4],
  ['Elsworth Crossing', 45.77, -112.35, 8, 3.5],
  ['Fenwick Hollow', 45.12, -112.1, 6, 3],
  ['Greyhallow', 46.05, -111.7, 6, 3],
  ['Hollin Ford', 45.35, -110.95, 5, 3],
  ['Ivybridge Reach', 45.58, -110.72, 5, 2.5],
  ['Jessop Mill', 45.98, -112.55, 4, 2.5],
  ['Kestrel Downs', 45.05, -111.3, 4, 2.5],
  ['Lowmere', 45.7, -111.82, 4, 2],
  ['Marrowgate', 45.43, -112.5, 3, 2],
];

const KINDS = ['Community Clinic', 'Pharmacy', 'Night Shelter', 'Counselling Centre', 'Testing Point', 'Family Support Hub'] as const;
const HOURS = ['Mon-Fri 08:00-18:00', 'Daily 09:00-21:00', 'Open 24 hours', 'Mon-Sat 10:00-16:00'] as const;



/** A CSV site table of `count` invented sites (id, name, lat, lon and three detail columns). */
export function harrowValeCsv(count = 2000, seed = 20261201): string {
  const random = prng(seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
  const totalWeight = TOWNS.reduce((sum, t) => sum + t[3], 0);
  const lines = ['id,name,lat,lon,kind,phone,hours'];
  for (let i = 1; i <= count; i++) {
    let pick = random() * totalWeight;
    const town = TOWNS.find((t) => (pick -= t[3]) < 0) ?? TOWNS[0]!;
    const [townName, lat0, lon0, , spreadKm] = town;
    const lat = lat0 + (gauss() * spreadKm) / 111.2;
    const lon = lon0 + (gauss() * spreadKm) / (111.2 * Math.cos((lat0 * Math.PI) / 180));
    const kind = KINDS[Math.floor(random() * KINDS.length)]!;
    // 555-01xx numbers are set aside for fiction (common practice in North American examples).
    const phone = `+1 406 555 01${String(Math.floor(random() * 100)).padStart(2, '0')}`;
    const id = `HV-${String(i).padStart(4, '0')}`;
    const fields = [id, `${townName} ${kind} ${i}`, lat.toFixed(6), lon.toFixed(6), kind, phone, HOURS[i % HOURS.length]!];
    lines.push(fields.map(csvField).join(','));
  }
  return lines.join('\n') + '\n';
}
