/**
 * Plain-words help for a site table's header row: which separator a one-column header really
 * used, and which column a missing required one is probably spelled as. Messages only; the
 * accepted names stay exactly id, lat and lon (matched ignoring case).
 */

const SEPARATORS = [
  [';', 'semicolons (;)'],
  ['\t', 'tabs'],
  ['|', 'vertical bars (|)'],
] as const;

/** For a header read as one cell that holds another separator: a message naming it; else null. */
export function separatorHint(header: readonly string[]): string | null {
  if (header.length !== 1) return null;
  const found = SEPARATORS.find(([sep]) => header[0]!.includes(sep));
  if (!found) return null;
  return (
    `the header row is one column, "${header[0]!.slice(0, 60).replaceAll('\t', '\\t')}": the file seems to be separated by ${found[1]}, ` +
    'but nearveil reads comma-separated CSV (RFC 4180); save or export it as "CSV (comma-separated)" and try again'
  );
}

/** Other spellings people use for the required columns (a spreadsheet habit, common practice). */
const SPELLINGS: Record<'id' | 'lat' | 'lon', readonly string[]> = {
  id: ['identifier', 'site_id', 'siteid', 'site id', 'code', 'ref', 'key'],
  lat: ['latitude', 'y', 'lat_deg', 'latitude_deg'],
  lon: ['longitude', 'lng', 'long', 'x', 'lon_deg', 'longitude_deg'],
};

/** The message for a missing required column: the columns found, what is accepted, and a likely rename. */
export function missingColumnMessage(name: 'id' | 'lat' | 'lon', header: readonly string[]): string {
  const likely = header.find((h) => SPELLINGS[name].includes(h.trim().toLowerCase()));
  const found = header.map((h) => `"${h.slice(0, 40)}"`).join(', ');
  return (
    `missing required column "${name}"` +
    (likely ? `: rename column "${likely}" to "${name}"` : '') +
    ` (columns found: ${found}; required: id, lat, lon, matched ignoring case; optional: name; other columns are details)`
  );
}
