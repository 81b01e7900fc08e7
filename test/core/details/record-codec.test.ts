import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { decodeRecord, encodeAllRecords, encodeRecord, MAX_RECORD_BYTES, padRecord } from '../../../core/details/record-codec.ts';
import { InputError } from '../../../core/errors/input-error.ts';
import { parseSiteTable, type Site } from '../../../core/geo/site-table.ts';

const columns = ['phone', 'hours', '__proto__', 'note'];

describe('record encoding', () => {
  it('round-trips every column, padded, including awkward text', () => {
    const site: Site = {
      id: 'clinic-7',
      name: 'Saint Åsa "North", Ward 3',
      lat: -33.868820000000005,
      lon: 151.20929,
      // fromEntries, because `__proto__:` in a literal would set the prototype instead.
      details: Object.fromEntries([['phone', '+1 406 555 0199'], ['hours', 'Mon-Fri\r\n08:00-18:00'], ['__proto__', 'kept as text'], ['note', '']]),
    };
    const bytes = encodeRecord(site, columns);
    const back = decodeRecord(padRecord(bytes, bytes.length + 40), columns);
    expect(back).toEqual(site);
    expect(Object.keys(back.details)).toEqual(columns);
    expect(Object.getPrototypeOf(back.details)).toBe(Object.prototype);
  });

  it('keeps a missing name apart from a name, and coordinates bit for bit', () => {
    fc.assert(
      fc.property(
        fc.string({ minLength: 1, maxLength: 40, unit: 'grapheme' }),
        fc.option(fc.string({ maxLength: 60, unit: 'grapheme' }), { nil: null }),
        fc.double({ min: -90, max: 90, noNaN: true }),
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.array(fc.string({ maxLength: 200, unit: 'grapheme' }), { minLength: 4, maxLength: 4 }),
        (id, name, lat, lon, cells) => {
          const site: Site = { id, name, lat, lon, details: Object.fromEntries(columns.map((c, i) => [c, cells[i]!])) };
          const back = decodeRecord(padRecord(encodeRecord(site, columns), MAX_RECORD_BYTES), columns);
          expect(back).toEqual(site);
          expect(Object.is(back.lat, lat) && Object.is(back.lon, lon)).toBe(true);
        },
      ),
      { numRuns: 300, seed: 20261203 },
    );
  });

  it('refuses non-zero padding, a wrong format byte and a length running past the end', () => {
    const site: Site = { id: 'a', name: null, lat: 1, lon: 2, details: Object.fromEntries(columns.map((c) => [c, c === 'phone' ? 'x' : ''])) };
    const padded = padRecord(encodeRecord(site, columns), 64);
    const badPad = padded.slice();
    badPad[63] = 7;
    expect(() => decodeRecord(badPad, columns)).toThrow(/expected zero padding/);
    const badFormat = padded.slice();
    badFormat[0] = 2;
    expect(() => decodeRecord(badFormat, columns)).toThrow(/record format 1, got 2/);
    const badLength = padded.slice();
    badLength[17] = 120; // id length
    expect(() => decodeRecord(badLength, columns)).toThrow(/runs past the record/);
  });

  it('names the spreadsheet row of a record over the size limit', () => {
    const big = 'x'.repeat(MAX_RECORD_BYTES);
    const table = parseSiteTable(`id,lat,lon,notes\na,1,2,short\n\nb,3,4,${big}\nc,5,6,fine\n`);
    let caught: unknown;
    try {
      encodeAllRecords(table);
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(InputError);
    const e = caught as InputError;
    expect(e.code).toBe('record_too_large');
    expect(e.status).toBe(413);
    // The blank line is row 3, so site b is on row 4.
    expect(e.message).toMatch(/row 4 \(site "b"\): its record is \d+ bytes, the limit is 4096 bytes/);
    expect(e.details).toEqual([{ row: 4, message: expect.stringContaining('row 4 (site "b")') }]);
  });

  it('pads every record to the longest one', () => {
    const table = parseSiteTable('id,lat,lon,notes\na,1,2,short\nb,3,4,a longer note here\n');
    const { records, recordBytes } = encodeAllRecords(table);
    expect(recordBytes).toBe(Math.max(...records.map((r) => r.length)));
    expect(recordBytes).toBe(records[1]!.length);
  });
});
