import { spreadsheetSafeField } from '../../core/csv-writing/csv-field.ts';
import type { Statement } from './statement.ts';
import { formatPriceMicros } from './statement-minor-units.ts';

/** The two CSV files of a statement: one table each, so a spreadsheet reads either whole. */
export type StatementTable = 'lines' | 'days';
export const STATEMENT_TABLES: readonly StatementTable[] = ['lines', 'days'];

/**
 * The priced lines (RFC 4180, CRLF line ends): one row per line, then the total row. `amount` is
 * in the currency's minor unit (ISO 4217: "12.34" EUR, "1234" JPY), rounded half up per line; the
 * total's amount is their sum. The exact micro-units stay in `amount_micros`. The daily counts the
 * lines come from are the other file (`statementDaysCsv`, `?format=csv&table=days`).
 */
export function statementCsv(s: Statement): string {
  const rows: Array<Array<string | number>> = [['tenant', 'month', 'currency', 'item', 'quantity', 'unit', 'unit_price', 'priced_per', 'amount', 'amount_micros']];
  for (const l of s.lines) rows.push([s.tenant, s.month, s.currency, l.item, l.quantity, l.unit, formatPriceMicros(l.unitPriceMicros), l.pricedPer, l.amount, l.amountMicros]);
  rows.push([s.tenant, s.month, s.currency, 'total', '', '', '', '', s.amountDue, s.totalMicros]);
  return csvText(rows);
}

/** The month's usage per day, which the lines price (refused queries shown, never billed). */
export function statementDaysCsv(s: Statement): string {
  const rows: Array<Array<string | number>> = [['tenant', 'month', 'day', 'queries', 'rejected', 'bytes_in', 'bytes_out', 'multiplications']];
  for (const d of s.days) rows.push([s.tenant, s.month, d.day, d.queries, d.rejected, d.bytesIn, d.bytesOut, d.multiplications]);
  return csvText(rows);
}

/** Text cells a spreadsheet could run as a formula are neutralised (core/csv-writing/csv-field.ts). */
const csvText = (rows: Array<Array<string | number>>) => rows.map((r) => r.map(spreadsheetSafeField).join(',')).join('\r\n') + '\r\n';
