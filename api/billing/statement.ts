import type { UsageReport } from '../metering/usage-report.ts';
import { formatMicros, lineAmount } from './money.ts';
import { spreadsheetSafeField } from '../../core/csv-writing/csv-field.ts';

export interface Tariff {
  fromMonth: string;
  queryMicros: number;
  gbMicros: number;
  millionMultiplicationsMicros: number;
  monthlyBaseMicros: number;
}

export interface StatementLine {
  item: 'monthly_base' | 'queries' | 'transfer' | 'multiplications';
  quantity: number;
  unit: 'month' | 'query' | 'byte' | 'multiplication';
  /** The tariff's price and the quantity it is quoted per (1 query, 10^9 bytes, 10^6 multiplications). */
  unitPriceMicros: number;
  pricedPer: number;
  amountMicros: number;
}

export interface Statement {
  tenant: string;
  month: string;
  currency: string;
  amountsIn: 'micro-units (1/1,000,000 of the currency)';
  tariff: Tariff;
  usage: UsageReport['totals'];
  lines: StatementLine[];
  totalMicros: number;
  total: string;
  days: UsageReport['days'];
}

/** 1 GB = 10^9 bytes (SI), bytes in plus bytes out. */
export const BYTES_PER_GB = 1_000_000_000;
export const MULTIPLICATIONS_PER_MILLION = 1_000_000;

/**
 * A month's statement: the tariff applied to the month's answered usage (refused queries are
 * shown, never billed). Pure: the same usage and tariff always give the same statement.
 */
export function buildStatement(tenant: string, currency: string, tariff: Tariff, usage: UsageReport): Statement {
  const u = usage.totals;
  const moved = u.bytesIn + u.bytesOut;
  const lines: StatementLine[] = [
    { item: 'monthly_base', quantity: 1, unit: 'month', unitPriceMicros: tariff.monthlyBaseMicros, pricedPer: 1, amountMicros: tariff.monthlyBaseMicros },
    { item: 'queries', quantity: u.queries, unit: 'query', unitPriceMicros: tariff.queryMicros, pricedPer: 1, amountMicros: lineAmount(u.queries, tariff.queryMicros) },
    { item: 'transfer', quantity: moved, unit: 'byte', unitPriceMicros: tariff.gbMicros, pricedPer: BYTES_PER_GB, amountMicros: lineAmount(moved, tariff.gbMicros, BYTES_PER_GB) },
    {
      item: 'multiplications',
      quantity: u.multiplications,
      unit: 'multiplication',
      unitPriceMicros: tariff.millionMultiplicationsMicros,
      pricedPer: MULTIPLICATIONS_PER_MILLION,
      amountMicros: lineAmount(u.multiplications, tariff.millionMultiplicationsMicros, MULTIPLICATIONS_PER_MILLION),
    },
  ];
  const totalMicros = lines.reduce((sum, l) => sum + l.amountMicros, 0);
  return {
    tenant,
    month: usage.month,
    currency,
    amountsIn: 'micro-units (1/1,000,000 of the currency)',
    tariff,
    usage: u,
    lines,
    totalMicros,
    total: `${formatMicros(totalMicros)} ${currency}`,
    days: usage.days,
  };
}

/** One CSV field per RFC 4180: quoted when it holds a comma, quote or line break. */

/**
 * The statement as CSV (RFC 4180, CRLF line ends): one row per line, then the total row, then
 * one row per day of usage so the lines can be recomputed in a spreadsheet. Text cells that a
 * spreadsheet could run as a formula are neutralised (core/csv-writing/csv-field.ts).
 */
export function statementCsv(s: Statement): string {
  const header = ['tenant', 'month', 'currency', 'item', 'quantity', 'unit', 'unit_price_micros', 'priced_per', 'amount_micros'];
  const rows: Array<Array<string | number>> = [header];
  for (const l of s.lines) rows.push([s.tenant, s.month, s.currency, l.item, l.quantity, l.unit, l.unitPriceMicros, l.pricedPer, l.amountMicros]);
  rows.push([s.tenant, s.month, s.currency, 'total', '', '', '', '', s.totalMicros]);
  rows.push([]);
  rows.push(['day', 'queries', 'rejected', 'bytes_in', 'bytes_out', 'multiplications']);
  for (const d of s.days) rows.push([d.day, d.queries, d.rejected, d.bytesIn, d.bytesOut, d.multiplications]);
  return rows.map((r) => r.map(spreadsheetSafeField).join(',')).join('\r\n') + '\r\n';
}
