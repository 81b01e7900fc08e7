import { csvField, spreadsheetSafeField } from '../../../core/csv-writing/csv-field.ts';
import { inspectSiteRecords } from '../../../core/geo/site-table.ts';

/** One problem placed on the grid: model row (-1 for the header), column (-1 for the whole row). */
export interface CellIssue {
  row: number;
  col: number;
  message: string;
}

export interface SheetIssues {
  list: CellIssue[];
  /** `${row}:${col}` -> message(s), for drawing. */
  byCell: Map<string, string>;
  /** Rows with any problem, for "next problem" and the count. */
  rows: Set<number>;
  /** Rows that are entirely empty: not saved and not checked, as blank CSV lines. */
  blankRows: number;
}

const isBlankRow = (r: readonly string[]) => r.every((c) => c.trim() === '');

/**
 * Checks the sheet with the same code the server runs on upload (core/geo/site-table.ts), so
 * a sheet with no marked cell is accepted when saved. Every issue is kept, not only the first
 * 50. Entirely empty rows are skipped (the CSV written on save leaves them out).
 */
export function checkSheet(columns: readonly string[], rows: readonly (readonly string[])[]): SheetIssues {
  const kept: number[] = [];
  const records: string[][] = [columns.slice()];
  for (let i = 0; i < rows.length; i++) {
    if (isBlankRow(rows[i]!)) continue;
    kept.push(i);
    records.push(rows[i]!.slice());
  }
  const byCell = new Map<string, string>();
  const list: CellIssue[] = [];
  const rowSet = new Set<number>();
  const add = (row: number, col: number, message: string) => {
    list.push({ row, col, message });
    const key = `${row}:${col}`;
    byCell.set(key, byCell.has(key) ? `${byCell.get(key)}; ${message}` : message);
    if (row >= 0) rowSet.add(row);
  };
  if (kept.length === 0) {
    add(-1, -1, 'the table has no site rows yet: add or paste some');
  } else {
    const { issues } = inspectSiteRecords(records);
    const colOf = (name: string | undefined) => (name === undefined ? -1 : columns.findIndex((c) => c.trim().toLowerCase() === name.trim().toLowerCase()));
    for (const issue of issues) {
      const row = issue.row === undefined || issue.row <= 1 ? -1 : kept[issue.row - 2] ?? -1;
      add(row, colOf(issue.column), issue.message);
    }
  }
  list.sort((a, b) => a.row - b.row || a.col - b.col);
  return { list, byCell, rows: rowSet, blankRows: rows.length - kept.length };
}

/** The sheet as CSV for upload (RFC 4180 quoting, every cell exact), without entirely empty rows. */
export function sheetCsv(columns: readonly string[], rows: readonly (readonly string[])[]): string {
  return writeSheet(columns, rows, csvField);
}

/**
 * The sheet as CSV for people to open in a spreadsheet: as sheetCsv, but a cell that could run as
 * a formula gets a leading ' (core/csv-writing/csv-field.ts). Never uploaded: that would store the '.
 */
export function sheetExportCsv(columns: readonly string[], rows: readonly (readonly string[])[]): string {
  return writeSheet(columns, rows, spreadsheetSafeField);
}

function writeSheet(columns: readonly string[], rows: readonly (readonly string[])[], field: (cell: string) => string): string {
  const line = (cells: readonly string[]) => cells.map((c) => field(c)).join(',');
  const lines = [line(columns)];
  for (const row of rows) if (!isBlankRow(row)) lines.push(line(row));
  return lines.join('\r\n') + '\r\n';
}
