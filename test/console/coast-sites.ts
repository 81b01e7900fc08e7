import { seededRandom } from '../../scripts/demo/seeded-random.ts';

/**
 * Invented sites for the console screens test: random points (seeded) in a box that holds both
 * land and sea, so the map's land and sea can be told apart, with eight columns, so the site
 * table is wider than the window. Names, phones and hours are made up; +999 is a spare country
 * code (ITU-T E.164 lists it as unassigned; from memory), so no number is anyone's.
 */
export interface CoastSite {
  id: string;
  name: string;
  lat: number;
  lon: number;
  kind: string;
  phone: string;
  hours: string;
  notes: string;
}

/** A stretch of coast where land (west) meets open sea (east); nothing in the test names a real place. */
export const COAST_BOX = { latMin: 62.5, latMax: 68.5, lonMin: -44, lonMax: -26 } as const;

const FIRST = ['Brae', 'Corrin', 'Dunskel', 'Hollow', 'Iskel', 'Varn', 'Tarrow', 'Elmsk'];
const KINDS = ['Clinic', 'Shelter', 'Pharmacy', 'Support Point'];

export function coastSites(count: number, seed: number, prefix = 'SK'): CoastSite[] {
  const random = seededRandom(seed);
  const pick = <T>(list: readonly T[]) => list[Math.floor(random() * list.length)]!;
  return Array.from({ length: count }, (_, i) => {
    const kind = pick(KINDS);
    return {
      id: `${prefix}-${String(i + 1).padStart(3, '0')}`,
      name: `${pick(FIRST)} ${kind} ${i + 1}`,
      lat: Number((COAST_BOX.latMin + random() * (COAST_BOX.latMax - COAST_BOX.latMin)).toFixed(5)),
      lon: Number((COAST_BOX.lonMin + random() * (COAST_BOX.lonMax - COAST_BOX.lonMin)).toFixed(5)),
      kind,
      phone: `+999 4${String(Math.floor(random() * 1e6)).padStart(6, '0')}`,
      hours: pick(['Mon-Fri 09-17', 'daily 08-20', 'by appointment']),
      notes: 'invented test site',
    };
  });
}

export function coastCsv(sites: readonly CoastSite[]): string {
  const header = 'id,name,lat,lon,kind,phone,hours,notes';
  return [header, ...sites.map((s) => [s.id, s.name, s.lat, s.lon, s.kind, s.phone, s.hours, s.notes].join(','))].join('\n') + '\n';
}
