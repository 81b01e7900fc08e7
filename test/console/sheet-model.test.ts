import { describe, expect, it } from 'vitest';
import { checkSheet, sheetCsv } from '../../console/src/sheet/sheet-issues.ts';
import { SheetModel } from '../../console/src/sheet/sheet-model.ts';
import { formatTsv, parseTsv } from '../../console/src/sheet/tsv.ts';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { readCsv } from '../../core/geo/csv.ts';

describe('SheetModel edits, with undo and redo', () => {
  it('pastes a block past the edges, growing rows and columns, and undoes it exactly', () => {
    const m = new SheetModel(['id', 'lat'], [['a', '1']]);
    m.setBlock(0, 1, [['2', 'x'], ['3', 'y']]);
    expect(m.columns).toEqual(['id', 'lat', 'column 3']);
    expect(m.rows).toEqual([['a', '2', 'x'], ['', '3', 'y']]);
    expect(m.undo()).toBe('paste');
    expect(m.columns).toEqual(['id', 'lat']);
    expect(m.rows).toEqual([['a', '1']]);
    expect(m.redo()).toBe('paste');
    expect(m.rows).toEqual([['a', '2', 'x'], ['', '3', 'y']]);
  });

  it('fills down, inserts and deletes rows and columns, each one undo step', () => {
    const m = new SheetModel(['id', 'kind'], [['1', 'clinic'], ['2', ''], ['3', '']]);
    m.fillDown(0, 1, 2, 1);
    expect(m.rows.map((r) => r[1])).toEqual(['clinic', 'clinic', 'clinic']);
    m.insertRows(1, 2);
    expect(m.rows.length).toBe(5);
    m.deleteRows([0, 4, 4]);
    expect(m.rows.map((r) => r[0])).toEqual(['', '', '2']);
    m.insertColumn(1, 'phone');
    expect(m.columns).toEqual(['id', 'phone', 'kind']);
    expect(() => m.insertColumn(0, 'PHONE')).toThrow(/exists already/);
    m.deleteColumn(2);
    expect(m.columns).toEqual(['id', 'phone']);
    for (let i = 0; i < 5; i++) m.undo();
    expect(m.columns).toEqual(['id', 'kind']);
    expect(m.rows).toEqual([['1', 'clinic'], ['2', ''], ['3', '']]);
    expect(m.canUndo).toBe(false);
  });

  it('sorts numbers as numbers and text by locale, empty cells last, stable', () => {
    const m = new SheetModel(['id', 'lat'], [['b', '10'], ['a', '9'], ['c', ''], ['d', '-1']]);
    m.sortBy(1, 'ascending');
    expect(m.rows.map((r) => r[0])).toEqual(['d', 'a', 'b', 'c']);
    m.sortBy(1, 'descending');
    expect(m.rows.map((r) => r[0])).toEqual(['b', 'a', 'd', 'c']);
    const t = new SheetModel(['id'], [['site 10'], ['site 9'], ['Site 1']]);
    t.sortBy(0, 'ascending');
    expect(t.rows.map((r) => r[0])).toEqual(['Site 1', 'site 9', 'site 10']);
    expect(t.matching(0, 'SITE 1')).toEqual([0, 2]);
  });
});

describe('tab-separated clipboard text', () => {
  it('reads quoted cells with tabs, line breaks and doubled quotes, and writes them back', () => {
    // Quoting as spreadsheet programs put multi-line cells on the clipboard (common practice).
    const text = 'id\tname\r\n1\t"two\nlines"\r\n2\t"say ""hi"""\r\n3\t\r\n';
    const rows = parseTsv(text);
    expect(rows).toEqual([['id', 'name'], ['1', 'two\nlines'], ['2', 'say "hi"'], ['3', '']]);
    expect(parseTsv(formatTsv(rows))).toEqual(rows);
  });
});

describe('checkSheet marks every problem the server would refuse, on its cell', () => {
  it('finds out-of-range, missing and repeated values beyond the 50 the upload error lists', () => {
    const rows: string[][] = [];
    for (let i = 0; i < 60; i++) rows.push([`s${i}`, '', '95', '100']);
    rows.push(['s1', '', '45', '10']); // repeats the id of row 3
    rows.push(['', '', '', '']); // an empty row: left out, not a problem
    rows.push(['t', '', '45', '']); // missing longitude
    const issues = checkSheet(['id', 'name', 'lat', 'lon'], rows);
    expect(issues.list.length).toBe(62);
    expect(issues.byCell.get('0:2')).toBe('lat must be between -90 and 90, got 95');
    expect(issues.byCell.get('60:0')).toBe('id "s1" repeats the id of row 3');
    expect(issues.byCell.get('62:3')).toBe('lon is empty');
    expect(issues.blankRows).toBe(1);
  });

  it('a sheet with no problems is a CSV the server parser accepts unchanged', () => {
    const columns = ['id', 'name', 'lat', 'lon', 'hours'];
    const rows = [['a1', 'Orrin Ford, clinic', '45.1', '-111.2', 'Mon "late"'], ['', '', '', '', ''], ['a2', ' Spaced ', '45.2', '-111.3', '']];
    expect(checkSheet(columns, rows).list).toEqual([]);
    const csv = sheetCsv(columns, rows);
    // core/geo/csv.ts reads RFC 4180, the server's reader: the cells come back as typed.
    expect(readCsv(csv).records).toEqual([columns, rows[0], rows[2]]);
    const table = parseSiteTable(csv);
    expect(table.sites.map((s) => [s.id, s.name, s.details.hours])).toEqual([['a1', 'Orrin Ford, clinic', 'Mon "late"'], ['a2', 'Spaced', '']]);
  });

  it('marks the header when a required column is missing', () => {
    const issues = checkSheet(['id', 'latitude', 'lon'], [['a', '1', '2']]);
    expect(issues.list.map((i) => [i.row, i.message])).toEqual([[-1, expect.stringMatching(/missing required column "lat"/)]]);
  });
});
