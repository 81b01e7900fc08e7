import { describe, expect, it } from 'vitest';
import { InputError, type InputIssue } from '../../../core/errors/input-error.ts';
import { inspectSiteRecords, parseSiteTable } from '../../../core/geo/site-table.ts';
import { MAX_CELL_CHARS, MAX_COLUMN_NAME_CHARS, MAX_COLUMNS, MAX_ID_CHARS, MAX_NAME_CHARS } from '../../../core/geo/table-limits.ts';
import { MAX_RECORD_BYTES } from '../../../core/details/record-codec.ts';

// Demo rows: an invented network of ferry ticket kiosks in the invented Fenwick Isles.
const HEADER = 'id,name,lat,lon,hours';

function issuesOf(csv: string): InputIssue[] {
  try {
    parseSiteTable(csv);
  } catch (e) {
    if (e instanceof InputError && e.code === 'site_table') return [...e.details];
    throw e;
  }
  throw new Error('expected parseSiteTable to refuse the table');
}

const row = (id: string, name: string, hours: string) => `${HEADER}\nk1,Skerry Pier,57.1,-6.2,9-17\n${id},${name},57.2,-6.3,${hours}\n`;
const char = (cp: number) => String.fromCodePoint(cp);

describe('control and bidirectional characters are refused with row and column', () => {
  // C0 controls and DEL: ASCII (RFC 20); C1 controls: ISO/IEC 6429; bidi formatting characters:
  // Unicode UAX #9, "Explicit Directional Embeddings/Overrides/Isolates" and the implicit marks (all from memory).
  const refused: Array<[string, number]> = [
    ['NUL', 0x00], ['BEL', 0x07], ['ESC', 0x1b], ['DEL', 0x7f], ['C1 NEL', 0x85], ['C1 CSI', 0x9b],
    ['LRE', 0x202a], ['RLE', 0x202b], ['PDF', 0x202c], ['LRO', 0x202d], ['RLO', 0x202e],
    ['LRI', 0x2066], ['RLI', 0x2067], ['FSI', 0x2068], ['PDI', 0x2069], ['LRM', 0x200e], ['RLM', 0x200f], ['ALM', 0x061c],
  ];

  for (const [what, cp] of refused) {
    it(`refuses ${what} (U+${cp.toString(16).toUpperCase().padStart(4, '0')}) in an id, a name and a detail cell`, () => {
      const bad = `x${char(cp)}y`;
      const hex = `U+${cp.toString(16).toUpperCase().padStart(4, '0')}`;
      expect(issuesOf(row(bad, 'Tarn Slip', '9-17'))).toEqual([{ row: 3, column: 'id', message: expect.stringContaining(`${hex}`) }]);
      expect(issuesOf(row('k2', bad, '9-17'))).toEqual([{ row: 3, column: 'name', message: expect.stringContaining(`${hex}`) }]);
      expect(issuesOf(row('k2', 'Tarn Slip', bad))).toEqual([{ row: 3, column: 'hours', message: expect.stringContaining(`${hex} (`) }]);
    });
  }

  it('names the position of the character', () => {
    const [issue] = issuesOf(row('k2', `Tarn${char(0x202e)}Slip`, '9-17'));
    expect(issue!.message).toMatch(/U\+202E \(a bidirectional formatting character\) at character 5/);
  });

  it('refuses a control character in a header cell', () => {
    const issues = issuesOf(`id,lat,lon,ho${char(0x1b)}urs\nk1,57.1,-6.2,9-17\n`);
    expect(issues).toEqual([{ row: 1, column: `ho${char(0x1b)}urs`, message: expect.stringContaining('U+001B') }]);
  });

  it('keeps tab and line breaks inside a quoted detail cell (RFC 4180 section 2, rule 6), refuses them in an id or a name', () => {
    const table = parseSiteTable(`${HEADER}\nk1,Skerry Pier,57.1,-6.2,"Mon-Fri\t9-17\r\nSat 10-12"\n`);
    expect(table.sites[0]!.details.hours).toBe('Mon-Fri\t9-17\r\nSat 10-12');
    expect(issuesOf(`${HEADER}\n"k\t1",Skerry Pier,57.1,-6.2,9-17\n`)).toEqual([{ row: 2, column: 'id', message: expect.stringContaining('U+0009') }]);
    expect(issuesOf(`${HEADER}\nk1,"Skerry\nPier",57.1,-6.2,9-17\n`)).toEqual([{ row: 2, column: 'name', message: expect.stringContaining('U+000A') }]);
  });

  it('accepts ordinary non-ASCII text: accents, right-to-left letters, emoji', () => {
    const table = parseSiteTable(`${HEADER}\nk1,Ílle Bàn \u05d0\u05d1,57.1,-6.2,\u{1f6a2} 9-17\n`);
    expect(table.sites[0]!.name).toBe('Ílle Bàn \u05d0\u05d1');
  });

  it('reports the same issues through inspectSiteRecords, the console\'s check', () => {
    const { issues } = inspectSiteRecords([['id', 'name', 'lat', 'lon'], [`k${char(0)}`, 'Tarn Slip', '57', '-6']]);
    expect(issues).toEqual([{ row: 2, column: 'id', message: expect.stringContaining('U+0000') }]);
  });
});

describe('length and width limits are refused with row and column', () => {
  it('takes the limits stated in the README: id 64, name 200, 64 columns, column name 100, cell 4,096', () => {
    expect([MAX_ID_CHARS, MAX_NAME_CHARS, MAX_COLUMNS, MAX_COLUMN_NAME_CHARS, MAX_CELL_CHARS]).toEqual([64, 200, 64, 100, 4096]);
    expect(MAX_CELL_CHARS).toBe(MAX_RECORD_BYTES);
  });

  it('refuses a 4,000-character id and accepts one of 64', () => {
    expect(issuesOf(row('k'.repeat(4000), 'Tarn Slip', '9-17'))).toEqual([{ row: 3, column: 'id', message: 'id is 4000 characters long; at most 64 are allowed' }]);
    expect(issuesOf(row('k'.repeat(65), 'Tarn Slip', '9-17'))).toEqual([{ row: 3, column: 'id', message: expect.stringContaining('65 characters') }]);
    expect(parseSiteTable(row('k'.repeat(64), 'Tarn Slip', '9-17')).sites[1]!.id).toHaveLength(64);
  });

  it('counts characters as code points: 64 ship emoji (128 UTF-16 units) are a valid id', () => {
    const id = '\u{1f6a2}'.repeat(64);
    expect(parseSiteTable(row(id, 'Tarn Slip', '9-17')).sites[1]!.id).toBe(id);
    expect(issuesOf(row(id + '\u{1f6a2}', 'Tarn Slip', '9-17'))[0]!.message).toContain('65 characters');
  });

  it('refuses a name of 201 characters and accepts 200', () => {
    expect(issuesOf(row('k2', 'n'.repeat(201), '9-17'))).toEqual([{ row: 3, column: 'name', message: expect.stringContaining('201 characters') }]);
    expect(parseSiteTable(row('k2', 'n'.repeat(200), '9-17')).sites[1]!.name).toHaveLength(200);
  });

  it('refuses 3,000 detail columns and 65 columns, accepts 64', () => {
    const wide = (details: number) => {
      const names = Array.from({ length: details }, (_, i) => `d${i}`);
      return `id,lat,lon,${names.join(',')}\nk1,57.1,-6.2,${names.map(() => 'x').join(',')}\n`;
    };
    expect(issuesOf(wide(3000))).toEqual([{ row: 1, message: 'expected at most 64 columns, got 3003' }]);
    expect(issuesOf(wide(62))).toEqual([{ row: 1, message: 'expected at most 64 columns, got 65' }]);
    expect(parseSiteTable(wide(61)).detailColumns).toHaveLength(61);
  });

  it('refuses a column name of 101 characters', () => {
    const long = 'c'.repeat(101);
    expect(issuesOf(`id,lat,lon,${long}\nk1,57.1,-6.2,x\n`)).toEqual([{ row: 1, column: long, message: expect.stringContaining('101 characters') }]);
    expect(parseSiteTable(`id,lat,lon,${'c'.repeat(100)}\nk1,57.1,-6.2,x\n`).detailColumns).toEqual(['c'.repeat(100)]);
  });

  it('refuses a detail cell over 4,096 characters, naming its column', () => {
    expect(issuesOf(row('k2', 'Tarn Slip', 'h'.repeat(4097)))).toEqual([{ row: 3, column: 'hours', message: expect.stringContaining('4097 characters') }]);
  });

  it('keeps a long coordinate out of the message', () => {
    const [issue] = issuesOf(`id,lat,lon\nk1,${'9'.repeat(5000)}x,1\n`);
    expect(issue!.message.length).toBeLessThan(120);
  });
});
