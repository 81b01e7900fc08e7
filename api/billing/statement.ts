import type { UsageReport } from '../metering/usage-report.ts';
import { formatMicros, lineAmount } from './money.ts';
import { formatMinorUnits, microsToMinorUnits, minorUnitDecimals } from './statement-minor-units.ts';

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
  /** amountMicros rounded half up to the currency's minor unit, as text: "12.34" EUR, "1234" JPY. */
  amount: string;
}

export interface Statement {
  tenant: string;
  month: string;
  currency: string;
  amountsIn: typeof AMOUNTS_IN;
  tariff: Tariff;
  usage: UsageReport['totals'];
  lines: StatementLine[];
  totalMicros: number;
  total: string;
  /** Decimals of the currency's minor unit (ISO 4217): 2 for EUR, 0 for JPY. */
  currencyDecimals: number;
  /** What is payable: the sum of the lines' rounded amounts, so the amount column adds up to it. */
  amountDue: string;
  days: UsageReport['days'];
}

const AMOUNTS_IN = 'fields ending in Micros: micro-units (1/1,000,000 of the currency); amount and amountDue: its ISO 4217 minor unit';

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
  const priced: Array<Omit<StatementLine, 'amount'>> = [
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
  const decimals = minorUnitDecimals(currency);
  const lines: StatementLine[] = priced.map((l) => ({ ...l, amount: formatMinorUnits(microsToMinorUnits(l.amountMicros, decimals), decimals) }));
  const totalMicros = lines.reduce((sum, l) => sum + l.amountMicros, 0);
  const dueMinor = lines.reduce((sum, l) => sum + microsToMinorUnits(l.amountMicros, decimals), 0);
  return {
    tenant,
    month: usage.month,
    currency,
    amountsIn: AMOUNTS_IN,
    tariff,
    usage: u,
    lines,
    totalMicros,
    total: `${formatMicros(totalMicros)} ${currency}`,
    currencyDecimals: decimals,
    amountDue: formatMinorUnits(dueMinor, decimals),
    days: usage.days,
  };
}
