import { z } from 'zod';
import { InputError, type InputIssue } from '../errors/input-error.ts';
import { readCsv } from './csv.ts';

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

function coordinate(column: 'lat' | 'lon', limit: number) {
  return z.string().transform((raw, ctx) => {
    const text = raw.trim();
    if (text === '') {
      ctx.issues.push({ code: 'custom', input: raw, message: `${column} is empty` });
      return z.NEVER;
    }
    const value = NUMBER_TEXT.test(text) ? Number(text) : Number.NaN;
    if (!Number.isFinite(value)) {
      ctx.issues.push({ code: 'custom', input: raw, message: `${column} must be a decimal number, got "${text}"` });
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
    `parseSiteTable: expected a valid site table, got ${issues.length} problem${issues.length === 1 ? '' : 's'}` +
      ` (first: ${where ? `${where}: ` : ''}${first.message})` +
      (more > 0 ? `; ${listed.length} listed, ${more} more not listed` : ''),
    { details: listed },
  );
}

/**
 * Parses a site table from CSV text (RFC 4180, see csv.ts) with a header row. Required columns
 * `id`, `lat`, `lon` (header names matched exactly, ignoring case and surrounding spaces; no
 * other spellings); optional `name`; every other column is a detail kept as text. Rows are
 * numbered as in a spreadsheet: the header is row 1, the first site row 2.
 *
 * Throws InputError `site_table` (400, field `file`) listing up to 50 issues, or
 * `site_table_too_large` (413) above MAX_SITES rows.
 */
export function parseSiteTable(csv: string): SiteTable {
  if (typeof csv !== 'string') throw new TypeError(`parseSiteTable: expected a string, got ${typeof csv}`);
  const { records, problems: csvProblems } = readCsv(csv);
  const isBlank = (r: string[]) => r.length === 1 && r[0]!.trim() === '';
  if (records.length === 0 || records.every(isBlank)) {
    fail([{ row: 1, message: 'expected a header row and at least one site row, got an empty file' }]);
  }
  if (records.length - 1 > MAX_SITES) {
    throw new InputError(
      'site_table_too_large',
      'file',
      `parseSiteTable: expected at most ${MAX_SITES} site rows, got ${records.length - 1}`,
      { status: 413 },
    );
  }
  const problems = csvProblems.map((p) => ({ row: p.record, message: p.message }));
  const { table, issues } = inspectSiteRecords(records, problems);
  if (issues.length > 0) fail(issues);
  return table;
}

/**
 * Checks a site table already split into records (header first) and returns every issue, not
 * only the first 50: the console marks each invalid cell with it before saving. Rows are
 * numbered as in parseSiteTable (header row 1). `table` holds the valid sites only; it is
 * complete exactly when `issues` is empty. Header problems stop the row checks.
 */
export function inspectSiteRecords(records: string[][], problems: InputIssue[] = []): { table: SiteTable; issues: InputIssue[] } {
  const isBlank = (r: string[]) => r.length === 1 && r[0]!.trim() === '';
  if (records.length === 0) return { table: { sites: [], detailColumns: [], rows: [] }, issues: [{ row: 1, message: 'expected a header row, got none' }] };
  const header = records[0]!.map((h) => h.trim());
  const issues: InputIssue[] = [...problems];
  const position = new Map<string, number>();
  header.forEach((h, i) => {
    const key = h.toLowerCase();
    if (h === '') issues.push({ row: 1, message: `header cell ${i + 1} is empty` });
    else if (position.has(key)) issues.push({ row: 1, column: h, message: `column "${h}" appears twice` });
    else position.set(key, i);
  });
  for (const name of REQUIRED) {
    if (!position.has(name)) {
      issues.push({
        row: 1,
        column: name,
        message: `missing required column "${name}" (required: id, lat, lon; matched ignoring case, no other spellings)`,
      });
    }
  }
  if (records.length === 1) issues.push({ row: 2, message: 'expected at least one site row, got none' });
  if (issues.length > 0) return { table: { sites: [], detailColumns: [], rows: [] }, issues };

  const at = (key: string) => position.get(key);
  const nameAt = at('name');
  const special = new Set([at('id'), at('lat'), at('lon'), nameAt]);
  const detailAt = header.map((_, i) => i).filter((i) => !special.has(i));
  const detailColumns = detailAt.map((i) => header[i]!);
  const firstRowOfId = new Map<string, number>();
  const sites: Site[] = [];
  const rows: number[] = [];
  for (let r = 1; r < records.length; r++) {
    const row = r + 1;
    const cells = records[r]!;
    if (isBlank(cells) && header.length > 1) continue; // blank lines carry no site
    if (cells.length !== header.length) {
      issues.push({ row, message: `expected ${header.length} fields, got ${cells.length}` });
      continue;
    }
    const parsed = RowSchema.safeParse({ id: cells[at('id')!], lat: cells[at('lat')!], lon: cells[at('lon')!] });
    // Repeated ids are checked even on rows with other problems, so one pass finds them all.
    const id = cells[at('id')!]!.trim();
    const seen = id === '' ? undefined : firstRowOfId.get(id);
    if (seen !== undefined) {
      issues.push({ row, column: header[at('id')!]!, message: `id "${id}" repeats the id of row ${seen}` });
    } else if (id !== '') {
      firstRowOfId.set(id, row);
    }
    if (!parsed.success) {
      for (const issue of parsed.error.issues) {
        const key = String(issue.path[0] ?? '');
        issues.push({ row, column: header[at(key) ?? -1] ?? key, message: issue.message });
      }
      continue;
    }
    if (seen !== undefined) continue;
    const { lat, lon } = parsed.data;
    const nameText = nameAt === undefined ? '' : cells[nameAt]!.trim();
    // fromEntries defines own properties, so a column named "__proto__" stays a plain detail.
    const details: Record<string, string> = Object.fromEntries(detailAt.map((i, k) => [detailColumns[k]!, cells[i]!]));
    sites.push({ id, name: nameText === '' ? null : nameText, lat, lon, details });
    rows.push(row);
  }
  return { table: { sites, detailColumns, rows }, issues };
}
