import { readCsv } from '../../../core/geo/csv.ts';
import type { SheetData } from './geojson.ts';

/** A CSV file (RFC 4180, read by core/geo/csv.ts, the server's reader) as sheet columns and rows. */
export function csvToSheet(text: string): SheetData & { problems: string[] } {
  const { records, problems } = readCsv(text);
  const nonBlank = records.filter((r) => !(r.length === 1 && r[0]!.trim() === ''));
  const [header, ...rows] = nonBlank;
  const columns = (header ?? ['id', 'name', 'lat', 'lon']).map((h) => h.trim());
  return { columns, rows, problems: problems.map((p) => `row ${p.record}: ${p.message}`) };
}
