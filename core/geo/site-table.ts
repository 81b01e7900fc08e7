import { z } from 'zod';
import { InputError, type InputIssue } from '../errors/input-error.ts';
import { csvRecords, type CsvProblem } from './csv.ts';
import { runSteps, type Steps } from '../steps/steps.ts';
import { refusedCharacter } from './cell-characters.ts';
import { missingColumnMessage, separatorHint } from './header-hints.ts';
import { exceedsChars, MAX_CELL_CHARS, MAX_COLUMN_NAME_CHARS, MAX_COLUMNS, MAX_ID_CHARS, MAX_NAME_CHARS } from './table-limits.ts';

/** One site of a table. `name` is null when the column is absent or the cell empty. */
export interface Site {
  id: string;
  name: string | null;
  lat: number;
  lon: number;
  details: Record<string, string>;
}

/** Sites in file order (a site's index is its position) and the detail columns in file order. */
export interface SiteTable {
  sites: Site[];
  detailColumns: string[];
  /** The spreadsheet row of each site (header = row 1), when the table was read from a file: errors name it. */
  rows?: number[];
}

/** Largest table a build accepts; larger ones get `site_table_too_large` (HTTP 413). */
export const MAX_SITES = 200_000;
/** Issues listed in an error's details; the message counts the rest. */
export const MAX_LISTED_ISSUES = 50;

const REQUIRED = ['id', 'lat', 'lon'] as const;
const NUMBER_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A cell quoted in a message: long ones cut, so one bad cell cannot make a huge error. */
const shortened = (text: string) => (text.length > 40 ? `${text.slice(0, 40)}... (${text.length} characters)` : text);

function coordinate(column: 'lat' | 'lon', limit: number) {
  return z.string().transform((raw, ctx) => {
    const text = raw.trim();
    if (text === '') {
      ctx.issues.push({ code: 'custom', input: raw, message: `${column} is empty` });
      return z.NEVER;
    }
    const value = NUMBER_TEXT.test(text) ? Number(text) : Number.NaN;
    if (!Number.isFinite(value)) {
      ctx.issues.push({ code: 'custom', input: raw, message: `${column} must be a decimal number, got "${shortened(text)}"` });
      return z.NEVER;
    }
    if (value < -limit || value > limit) {
      ctx.issues.push({ code: 'custom', input: raw, message: `${column} must be between -${limit} and ${limit}, got ${text}` });
      return z.NEVER;
    }
    return value;
  });
}

const RowSchema = z.object({
  id: z.string().transform((raw, ctx) => {
    const id = raw.trim();
    if (id === '') ctx.issues.push({ code: 'custom', input: raw, message: 'id is empty' });
    return id;
  }),
  lat: coordinate('lat', 90),
  lon: coordinate('lon', 180),
});

function fail(issues: InputIssue[]): never {
  const listed = issues.slice(0, MAX_LISTED_ISSUES);
  const more = issues.length - listed.length;
  const first = listed[0]!;
  const where = [first.row !== undefined ? `row ${first.row}` : '', first.column ? `column ${first.column}` : '']
    .filter(Boolean)
    .join(', ');
  throw new InputError(
    'site_table',
    'file',
    `the site table has ${issues.length} problem${issues.length === 1 ? '' : 's'}` +
      ` (first: ${where ? `${where}: ` : ''}${first.message})` +
      (more > 0 ? `; ${listed.length} listed, ${more} more not listed` : ''),
    { details: listed },
  );
}

/**
 * Parses a site table from CSV text (RFC 4180, see csv.ts) with a header row. Required columns
 * `id`, `lat`, `lon` (header names matched exactly, ignoring case and surrounding spaces; no
 * other spellings); optional `name`; every other column is a detail kept as text. Cells holding
 * control or bidirectional characters (cell-characters.ts) or longer than the limits of
 * table-limits.ts are refused with their row and column. Rows are
 * numbered as in a spreadsheet: the header is row 1, the first site row 2.
 *
 * Throws InputError `site_table` (400, field `file`) listing up to 50 issues, or
 * `site_table_too_large` (413) above MAX_SITES rows.
 */
export function parseSiteTable(csv: string): SiteTable {
  const sites: Site[] = [];
  const rows: number[] = [];
  const { detailColumns } = runSteps(
    siteTableSteps(csv, (site, row) => {
      sites.push(site);
      rows.push(row);
    }),
  );
  return { sites, detailColumns, rows };
}

/** Rows read between two checkpoints of siteTableSteps. */
const ROWS_PER_CHECKPOINT = 2000;

/**
 * parseSiteTable as steps (core/steps) without keeping the table: `visit` sees every valid site with its spreadsheet
 * row and the detail columns, in file order, while the text is read; nothing else of a row is kept (a build of a
 * large table holds a few columns, never every cell). The same checks and errors as
 * parseSiteTable, thrown once the whole text is read; `visit` may have seen sites by then.
 */
export function* siteTableSteps(csv: string, visit: (site: Site, row: number, detailColumns: readonly string[]) => void): Steps<{ detailColumns: string[] }> {
  if (typeof csv !== 'string') throw new TypeError(`parseSiteTable: expected a string, got ${typeof csv}`);
  const csvProblems: CsvProblem[] = [];
  const records = csvRecords(csv, csvProblems);
  const first = records.next();
  const issues: InputIssue[] = [];
  const checker = first.done ? null : siteRowChecker(first.value, issues);
  let count = 0;
  let nonBlank = false;
  if (checker) {
    for (const cells of records) {
      count++;
      if (count > MAX_SITES) {
        throw new InputError('site_table_too_large', 'file', `the site table has more than ${MAX_SITES} site rows; at most ${MAX_SITES} are allowed (split it into several datasets)`, { status: 413 });
      }
      if (!isBlank(cells)) nonBlank = true;
      const site = checker.check(cells, count + 1);
      if (site) visit(site, count + 1, checker.detailColumns);
      // The share of the text is not known without counting ahead: progress stays at 0 here.
      if (count % ROWS_PER_CHECKPOINT === 0) yield 0;
    }
    if (count === 0) issues.push({ row: 2, message: 'expected at least one site row, got none' });
  }
  if (first.done || (isBlank(first.value) && !nonBlank)) {
    fail([{ row: 1, message: 'expected a header row and at least one site row, got an empty file' }]);
  }
  const all = [...csvProblems.map((p) => ({ row: p.record, message: p.message })), ...issues];
  if (all.length > 0) fail(all.sort((a, b) => (a.row ?? 0) - (b.row ?? 0)));
  return { detailColumns: checker!.detailColumns };
}

const isBlank = (r: string[]) => r.length === 1 && r[0]!.trim() === '';

/** A latitude beyond +-90 beside a longitude within +-90: the two columns are likely swapped. */
function looksSwapped(latText: string, lonText: string): boolean {
  const [lat, lon] = [latText.trim(), lonText.trim()].map((t) => (NUMBER_TEXT.test(t) ? Number(t) : Number.NaN));
  return Math.abs(lat!) > 90 && Math.abs(lat!) <= 180 && Math.abs(lon!) <= 90;
}

/** Why a cell's text is refused (a refused character, or longer than `limit` code points), or null. */
function textProblem(text: string, kind: 'label' | 'detail', limit: number): string | null {
  const refused = refusedCharacter(text, kind);
  if (refused) return refused;
  const length = exceedsChars(text, limit);
  return length === null ? null : `is ${length} characters long; at most ${limit} are allowed`;
}

/**
 * Checks a site table already split into records (header first) and returns every issue, not
 * only the first 50: the console marks each invalid cell with it before saving. Rows are
 * numbered as in parseSiteTable (header row 1). `table` holds the valid sites only; it is
 * complete exactly when `issues` is empty. Header problems stop the row checks.
 */
export function inspectSiteRecords(records: string[][], problems: InputIssue[] = []): { table: SiteTable; issues: InputIssue[] } {
  if (records.length === 0) return { table: { sites: [], detailColumns: [], rows: [] }, issues: [{ row: 1, message: 'expected a header row, got none' }] };
  const issues: InputIssue[] = [...problems];
  const checker = siteRowChecker(records[0]!, issues);
  if (records.length === 1) issues.push({ row: 2, message: 'expected at least one site row, got none' });
  if (!checker || records.length === 1) return { table: { sites: [], detailColumns: [], rows: [] }, issues };
  const sites: Site[] = [];
  const rows: number[] = [];
  for (let r = 1; r < records.length; r++) {
    const site = checker.check(records[r]!, r + 1);
    if (!site) continue;
    sites.push(site);
    rows.push(r + 1);
  }
  return { table: { sites, detailColumns: checker.detailColumns, rows }, issues };
}

/**
 * The checks of one table, a row at a time: the header is checked at once (null, with its
 * issues pushed, when it cannot be used); `check` returns a row's site, or null when the row is
 * blank or has issues (pushed onto `issues`). Repeated ids are found across all rows checked.
 */
function siteRowChecker(headerCells: string[], issues: InputIssue[]): { detailColumns: string[]; check(cells: string[], row: number): Site | null } | null {
  const header = headerCells.map((h) => h.trim());
  const before = issues.length;
  if (header.length > MAX_COLUMNS) {
    issues.push({ row: 1, message: `expected at most ${MAX_COLUMNS} columns, got ${header.length}` });
    return null;
  }
  const wrongSeparator = separatorHint(header);
  if (wrongSeparator) {
    issues.push({ row: 1, message: wrongSeparator });
    return null;
  }
  const position = new Map<string, number>();
  header.forEach((h, i) => {
    const key = h.toLowerCase();
    const problem = textProblem(h, 'label', MAX_COLUMN_NAME_CHARS);
    if (problem) issues.push({ row: 1, column: h, message: `header cell ${i + 1} ${problem}` });
    else if (h === '') issues.push({ row: 1, message: `header cell ${i + 1} is empty` });
    else if (position.has(key)) issues.push({ row: 1, column: h, message: `column "${h}" appears twice` });
    else position.set(key, i);
  });
  for (const name of REQUIRED) {
    if (!position.has(name)) issues.push({ row: 1, column: name, message: missingColumnMessage(name, header) });
  }
  if (issues.length > before) return null;
  const at = (key: string) => position.get(key);
  const [idAt, latAt, lonAt, nameAt] = [at('id')!, at('lat')!, at('lon')!, at('name')];
  const special = new Set([idAt, latAt, lonAt, nameAt]);
  const detailAt = header.map((_, i) => i).filter((i) => !special.has(i));
  const detailColumns = detailAt.map((i) => header[i]!);
  const firstRowOfId = new Map<string, number>();
  return {
    detailColumns,
    check(cells, row) {
      if (isBlank(cells) && header.length > 1) return null; // blank lines carry no site
      if (cells.length !== header.length) {
        issues.push({ row, message: `expected ${header.length} fields, got ${cells.length}` });
        return null;
      }
      const parsed = RowSchema.safeParse({ id: cells[idAt], lat: cells[latAt], lon: cells[lonAt] });
      // Repeated ids are checked even on rows with other problems, so one pass finds them all.
      const id = cells[idAt]!.trim();
      const seen = id === '' ? undefined : firstRowOfId.get(id);
      if (seen !== undefined) {
        issues.push({ row, column: header[idAt]!, message: `id "${id}" repeats the id of row ${seen}` });
      } else if (id !== '') {
        firstRowOfId.set(id, row);
      }
      if (!parsed.success) {
        const swapped = looksSwapped(cells[latAt]!, cells[lonAt]!) ? ' (lat and lon may be swapped: this lon would be a valid lat)' : '';
        for (const issue of parsed.error.issues) {
          const key = String(issue.path[0] ?? '');
          issues.push({ row, column: header[at(key) ?? -1] ?? key, message: issue.message + (key === 'lat' ? swapped : '') });
        }
      }
      const issuesBeforeText = issues.length;
      const textIssue = (i: number, text: string, kind: 'label' | 'detail', limit: number, what: string) => {
        const problem = textProblem(text, kind, limit);
        if (problem) issues.push({ row, column: header[i]!, message: `${what} ${problem}` });
      };
      textIssue(idAt, id, 'label', MAX_ID_CHARS, 'id');
      if (nameAt !== undefined) textIssue(nameAt, cells[nameAt]!.trim(), 'label', MAX_NAME_CHARS, 'name');
      for (const i of detailAt) textIssue(i, cells[i]!, 'detail', MAX_CELL_CHARS, 'cell');
      if (!parsed.success || issues.length > issuesBeforeText) return null;
      if (seen !== undefined) return null;
      const { lat, lon } = parsed.data;
      const nameText = nameAt === undefined ? '' : cells[nameAt]!.trim();
      // fromEntries defines own properties, so a column named "__proto__" stays a plain detail.
      const details: Record<string, string> = Object.fromEntries(detailAt.map((i, k) => [detailColumns[k]!, cells[i]!]));
      return { id, name: nameText === '' ? null : nameText, lat, lon, details };
    },
  };
}
