import { seededRandom as prng } from './seeded-random.ts';
import { csvField } from '../../core/csv-writing/csv-field.ts';

/**
 * Demo data only: an invented region, "Harrow Vale", with invented towns and invented care
 * sites clustered around them. It is put on the East Antarctic ice sheet (about 76 S, 60 E, some
 * 500 km from the nearest research station and 900 km from the coast), where nobody lives, so no
 * one can take it for a real place or service. Deterministic: the same seed gives the same file.
 */
const TOWNS: ReadonlyArray<readonly [name: string, lat: number, lon: number, weight: number, spreadKm: number]> = [
  ['Aldermoor', -75.93, 60.52, 22, 6],
  ['Brackenfold', -76.07, 58.99, 14, 5],
  ['Cindervale', -75.64, 61.22, 10, 4],
  ['Dunmarrow', -76.28, 60.00, 9, 4],
  ['Elsworth Crossing', -75.78, 57.83, 8, 3.5],
  ['Fenwick Hollow', -76.43, 58.55, 6, 3],
  ['Greyhallow', -75.50, 59.71, 6, 3],
  ['Hollin Ford', -76.20, 61.88, 5, 3],
  ['Ivybridge Reach', -75.97, 62.55, 5, 2.5],
  ['Jessop Mill', -75.57, 57.25, 4, 2.5],
  ['Kestrel Downs', -76.50, 60.87, 4, 2.5],
  ['Lowmere', -75.85, 59.36, 4, 2],
  ['Marrowgate', -76.12, 57.39, 3, 2],
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
    // Country code 999 is not assigned to any country or area (ITU-T E.164 keeps it spare; from
    // memory), so these numbers can reach no one.
    const phone = `+999 4021 01${String(Math.floor(random() * 100)).padStart(2, '0')}`;
    const id = `HV-${String(i).padStart(4, '0')}`;
    const fields = [id, `${townName} ${kind} ${i}`, lat.toFixed(6), lon.toFixed(6), kind, phone, HOURS[i % HOURS.length]!];
    lines.push(fields.map(csvField).join(','));
  }
  return lines.join('\n') + '\n';
}
