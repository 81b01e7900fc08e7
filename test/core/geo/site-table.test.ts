import { describe, expect, it } from 'vitest';
import { InputError } from '../../../core/errors/input-error.ts';
import { readCsv } from '../../../core/geo/csv.ts';
import { MAX_SITES, parseSiteTable } from '../../../core/geo/site-table.ts';

// Demo rows: an invented network of drop-in centres.
function failure(csv: string): InputError {
  try {
    parseSiteTable(csv);
  } catch (e) {
    if (e instanceof InputError) return e;
    throw e;
  }
  throw new Error('expected parseSiteTable to throw');
}

describe('readCsv (RFC 4180)', () => {
  it('reads quoted fields, doubled quotes, embedded commas and line breaks', () => {
    // RFC 4180 section 2, rules 5-7.
    const { records, problems } = readCsv('a,b\r\n"x, y","say ""hi""\r\nthere"\r\n"",z');
    expect(problems).toEqual([]);
    expect(records).toEqual([['a', 'b'], ['x, y', 'say "hi"\r\nthere'], ['', 'z']]);
  });

  it('reports an unclosed quote and a stray quote with their record number', () => {
    expect(readCsv('a,b\n1,"open').problems).toEqual([{ record: 2, message: 'a quoted field is never closed' }]);
    expect(readCsv('a,b\n1,2\n3,x"y').problems[0]?.record).toBe(3);
    expect(readCsv('a,b\n"1"x,2').problems[0]?.message).toMatch(/after a closing quote/);
  });
});

describe('parseSiteTable', () => {
  it('reads required, name and detail columns; BOM, CRLF and any header case', () => {
    const csv = '\uFEFFID,Name,Lat,LON,hours,"phone, main"\r\nc-1,"Harbour Drop-in",51.5,-0.12,9-17,"+44 0"\r\nc-2,,-33.9,151.2,,\r\n';
    const table = parseSiteTable(csv);
    expect(table.detailColumns).toEqual(['hours', 'phone, main']);
    expect(table.sites).toEqual([
      { id: 'c-1', name: 'Harbour Drop-in', lat: 51.5, lon: -0.12, details: { hours: '9-17', 'phone, main': '+44 0' } },
      { id: 'c-2', name: null, lat: -33.9, lon: 151.2, details: { hours: '', 'phone, main': '' } },
    ]);
  });

  it('accepts the range ends and skips blank lines, keeping spreadsheet row numbers', () => {
    const table = parseSiteTable('id,lat,lon\na,90,-180\n\nb,-90,180\n');
    expect(table.sites.map((s) => [s.id, s.lat, s.lon])).toEqual([['a', 90, -180], ['b', -90, 180]]);
    expect(failure('id,lat,lon\na,1,2\n\nb,x,2').details).toEqual([{ row: 4, column: 'lat', message: 'lat must be a decimal number, got "x"' }]);
  });

  it('names row and column of each bad cell, in the header spelling', () => {
    const e = failure('Id,LAT,lon\nA,123,0\n,1,1\nB,1,181\nC,,1\nA,2,2\nD,1e400,1');
    expect(e.code).toBe('site_table');
    expect(e.field).toBe('file');
    expect(e.status).toBe(400);
    expect(e.details).toEqual([
      { row: 2, column: 'LAT', message: 'lat must be between -90 and 90, got 123 (lat and lon may be swapped: this lon would be a valid lat)' },
      { row: 3, column: 'Id', message: 'id is empty' },
      { row: 4, column: 'lon', message: 'lon must be between -180 and 180, got 181' },
      { row: 5, column: 'LAT', message: 'lat is empty' },
      { row: 6, column: 'Id', message: 'id "A" repeats the id of row 2' },
      { row: 7, column: 'LAT', message: 'lat must be a decimal number, got "1e400"' },
    ]);
    expect(e.message).toMatch(/^the site table has 6 problems \(first: row 2, column LAT: /);
  });

  it('refuses an empty file, a missing column, a short row and a header without rows', () => {
    expect(failure('').details[0]?.message).toMatch(/got an empty file/);
    expect(failure('\uFEFF\r\n').details[0]?.message).toMatch(/got an empty file/);
    const missing = failure('id,latitude,lon\na,1,2');
    expect(missing.details).toEqual([
      {
        row: 1,
        column: 'lat',
        message: 'missing required column "lat": rename column "latitude" to "lat" (columns found: "id", "latitude", "lon"; required: id, lat, lon, matched ignoring case; optional: name; other columns are details)',
      },
    ]);
    expect(failure('id,lat,lon\na,1\nb,1,2,3').details).toEqual([
      { row: 2, message: 'expected 3 fields, got 2' },
      { row: 3, message: 'expected 3 fields, got 4' },
    ]);
    expect(failure('id,lat,lon\n').details).toEqual([{ row: 2, message: 'expected at least one site row, got none' }]);
    expect(failure('id,lat,lon,Lat\na,1,2,3').details[0]).toMatchObject({ row: 1, column: 'Lat' });
  });

  it('names the separator of a semicolon-, tab- or bar-separated file instead of listing missing columns', () => {
    for (const [sep, words] of [[';', 'semicolons'], ['\t', 'tabs'], ['|', 'vertical bars']] as const) {
      const e = failure(['id', 'name', 'lat', 'lon'].join(sep) + '\n' + ['a', 'A', '1', '2'].join(sep) + '\n');
      expect(e.details).toHaveLength(1);
      expect(e.details[0]!.message).toContain(`separated by ${words}`);
      expect(e.details[0]!.message).toContain('comma-separated CSV (RFC 4180)');
    }
  });

  it('suggests the rename for spreadsheet spellings of lat and lon (Latitude, Longitude, lng), and lists the columns found', () => {
    const e = failure('Site,Latitude,lng\na,1,2\n');
    expect(e.details.map((d) => d.message)).toEqual([
      expect.stringMatching(/^missing required column "id" \(columns found: "Site", "Latitude", "lng"/),
      expect.stringMatching(/^missing required column "lat": rename column "Latitude" to "lat"/),
      expect.stringMatching(/^missing required column "lon": rename column "lng" to "lon"/),
    ]);
  });

  it('says lat and lon may be swapped on a row whose lat is out of range while its lon would be a valid lat', () => {
    // Source (from memory): Omaha is at about 41.26 N, 95.94 W; written swapped it reads lat -95.94.
    const e = failure('id,lat,lon\nomaha,-95.94,41.26\nfar,-95.94,120\n');
    expect(e.details).toEqual([
      { row: 2, column: 'lat', message: 'lat must be between -90 and 90, got -95.94 (lat and lon may be swapped: this lon would be a valid lat)' },
      { row: 3, column: 'lat', message: 'lat must be between -90 and 90, got -95.94' },
    ]);
  });

  it('lists 50 issues and counts the rest in the message', () => {
    const rows = Array.from({ length: 70 }, (_, i) => `s${i},95,100`).join('\n');
    const e = failure(`id,lat,lon\n${rows}`);
    expect(e.details).toHaveLength(50);
    expect(e.details[49]).toEqual({ row: 51, column: 'lat', message: 'lat must be between -90 and 90, got 95' });
    expect(e.message).toMatch(/has 70 problems .*; 50 listed, 20 more not listed$/);
  });

  it('refuses more than 200,000 rows with site_table_too_large (413)', () => {
    const csv = `id,lat,lon\n${'x,0,0\n'.repeat(MAX_SITES + 1)}`;
    const e = failure(csv);
    expect(e.code).toBe('site_table_too_large');
    expect(e.status).toBe(413);
  });
});
