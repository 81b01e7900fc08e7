/**
 * Fields for the CSV files nearveil writes, quoted per RFC 4180 (section 2, rules 6 and 7: a field
 * holding a comma, quote or line break is enclosed in quotes and its quotes doubled).
 *
 * Spreadsheet programs run a cell that starts with `=`, `+`, `-` or `@` as a formula, and some
 * treat a leading tab or carriage return the same way, so a site table or statement opened in one
 * could run a formula a provider typed (the OWASP "CSV Injection" page lists those six characters
 * and advises a leading single quote; from memory). The rule here:
 *
 * - a cell that reads fully as a finite decimal number (`-111.2`, `+3`, `1e-5`) is left as it is,
 *   so coordinates and counts stay numbers;
 * - any other cell whose first character is one of the six gets a `'` in front and is quoted.
 *
 * `csvField` quotes only and keeps the text exact: for CSV that nearveil itself reads back (an
 * upload). `spreadsheetSafeField` applies the rule: for every file meant to be opened by people.
 */

/** The first characters OWASP names as starting a formula: = + - @ tab, carriage return. */
export const FORMULA_STARTS: readonly string[] = ['=', '+', '-', '@', '\t', '\r'];

/** The decimal numbers the site table reads as coordinates (core/geo/site-table.ts uses the same shape). */
const DECIMAL_NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** True when a spreadsheet could take `text` as a formula: it starts with one of FORMULA_STARTS and is not a plain number. */
export function mayRunAsFormula(text: string): boolean {
  if (text === '' || !FORMULA_STARTS.includes(text[0]!)) return false;
  return !(DECIMAL_NUMBER.test(text) && Number.isFinite(Number(text)));
}

/** `text` with a leading `'` when it may run as a formula, otherwise unchanged. Not yet quoted. */
export function neutraliseFormula(text: string): string {
  return mayRunAsFormula(text) ? `'${text}` : text;
}

/**
 * One CSV field per RFC 4180: quoted when it holds a comma, quote or line break, and also when it
 * starts or ends with white space (some readers trim unquoted fields).
 */
export function csvField(value: string | number): string {
  if (typeof value === 'number' && !Number.isFinite(value)) throw new RangeError(`csvField: expected a finite number, got ${value}`);
  const text = String(value);
  return /[",\r\n]/.test(text) || /^\s|\s$/.test(text) ? quoted(text) : text;
}

/** One CSV field for a file people open in a spreadsheet: the formula rule above, then RFC 4180 quoting. A neutralised cell is always quoted. */
export function spreadsheetSafeField(value: string | number): string {
  const text = typeof value === 'number' ? csvField(value) : value;
  return mayRunAsFormula(text) ? quoted(`'${text}`) : csvField(text);
}

const quoted = (text: string) => `"${text.replace(/"/g, '""')}"`;
