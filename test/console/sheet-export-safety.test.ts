import { describe, expect, it } from 'vitest';
import { readCsv } from '../../core/geo/csv.ts';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { importedFileText } from '../../console/src/io/file-text.ts';
import { sheetCsv, sheetExportCsv } from '../../console/src/sheet/sheet-issues.ts';

// Invented kiosks of the invented Fenwick Isles; the hours cells carry formula payloads.
const columns = ['id', 'name', 'lat', 'lon', 'hours', 'phone'];
const rows = [
  ['k1', 'Skerry Pier', '57.1', '-6.2', '=HYPERLINK("http://attacker.invalid","open")', '+44 1632 960001'],
  ['k2', '@Tarn Slip', '-57.25', '-111.2', '@SUM(1+9)', '-'],
  ['k3', 'Holm Quay', '57.3', '6', '9-17', '0100'],
];

describe('the console\'s CSV export neutralises formulas (OWASP "CSV Injection", from memory)', () => {
  it('prefixes a single quote to every cell starting with = + - @ that is not a number, and quotes it', () => {
    const text = sheetExportCsv(columns, rows);
    // RFC 4180: the export is read back by an independent RFC 4180 reader, cell by cell.
    const [header, ...back] = readCsv(text).records;
    expect(header).toEqual(columns);
    expect(back).toEqual([
      ['k1', 'Skerry Pier', '57.1', '-6.2', `'=HYPERLINK("http://attacker.invalid","open")`, "'+44 1632 960001"],
      ['k2', "'@Tarn Slip", '-57.25', '-111.2', "'@SUM(1+9)", "'-"],
      ['k3', 'Holm Quay', '57.3', '6', '9-17', '0100'],
    ]);
    // The cell as written starts with a quote character, so no spreadsheet sees "=" first.
    expect(text).toContain(`"'=HYPERLINK(""http://attacker.invalid"",""open"")"`);
    expect(text.split('\r\n')[2]).toMatch(/^k2,"'@Tarn Slip",-57\.25,-111\.2,/);
  });

  it('leaves the upload CSV exact, so saving stores what was typed', () => {
    const table = parseSiteTable(sheetCsv(columns, rows));
    expect(table.sites[0]!.details.hours).toBe(rows[0]![4]);
    expect(table.sites[1]!.name).toBe('@Tarn Slip');
    expect(table.sites[1]!.lon).toBe(-111.2);
  });
});

describe('the console\'s file import refuses text that is not UTF-8 (RFC 3629)', () => {
  it('names the line and byte offset of a Latin-1 byte instead of showing U+FFFD', async () => {
    // "Hólm" in ISO 8859-1: ó is the single byte 0xF3, a four-byte lead in UTF-8 that ASCII cannot continue.
    const bytes = new Uint8Array([...'id,name,lat,lon\nk3,H'].map((c) => c.charCodeAt(0)).concat(0xf3, ...[...'lm Quay,57.3,6\n'].map((c) => c.charCodeAt(0))));
    await expect(importedFileText(new Blob([bytes]))).rejects.toThrow(/line 2 \(byte offset 20\)/);
    expect(await importedFileText(new Blob(['id,name\nk3,H\u00f3lm Quay\n']))).toBe('id,name\nk3,H\u00f3lm Quay\n');
  });
});
