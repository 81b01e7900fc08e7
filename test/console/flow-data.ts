import { seededRandom } from '../../scripts/demo/seeded-random.ts';

/** 50 invented sites around the invented town of Fenwick Hollow, as a tab-separated block with a header. */
export function fenwickSites(): Array<{ id: string; name: string; lat: number; lon: number; phone: string }> {
  const random = seededRandom(2026);
  const kinds = ['Clinic', 'Pharmacy', 'Shelter', 'Testing Point', 'Support Hub'];
  return Array.from({ length: 50 }, (_, i) => ({
    id: `FH-${String(i + 1).padStart(3, '0')}`,
    name: `Fenwick ${kinds[i % kinds.length]} ${i + 1}`,
    lat: Number((-76.45 + 0.5 * random()).toFixed(6)),
    lon: Number((58.3 + 2 * random()).toFixed(6)),
    phone: `+999 4021 0${String(100 + i)}`,
  }));
}

/** The block as a spreadsheet program copies it; `badRow` gets an out-of-range latitude. */
export function fenwickTsv(badRow: number, badLat: string): string {
  const lines = ['id\tname\tlat\tlon\tphone'];
  fenwickSites().forEach((s, i) => lines.push([s.id, s.name, i === badRow ? badLat : String(s.lat), String(s.lon), s.phone].join('\t')));
  return lines.join('\r\n') + '\r\n';
}
