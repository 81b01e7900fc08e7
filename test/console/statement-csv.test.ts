import { describe, expect, it } from 'vitest';
import { buildStatement, type Tariff } from '../../api/billing/statement.ts';
import { statementCsv, statementDaysCsv } from '../../api/billing/statement-csv.ts';
import { microsToMinorUnits, minorUnitDecimals } from '../../api/billing/statement-minor-units.ts';
import { readCsv } from '../../core/geo/csv.ts';

// The statement CSV that the console's Keys screen and the operator's screen download. Amounts are in
// the currency's minor unit per ISO 4217 (table A.1, "Minor unit" column; from memory: EUR and USD 2,
// JPY 0, KWD and BHD 3, CLF 4), rounded half up per line; micro-units stay in a column of their own.

function statement(currency: string, tariff: Omit<Tariff, 'fromMonth'>, totals: { queries: number; bytesIn: number; bytesOut: number; multiplications: number }) {
  const counts = { rejected: 2, ...totals };
  return buildStatement('orrin-shelters', currency, { fromMonth: '2026-12', ...tariff }, { month: '2026-12', totals: counts, days: [{ day: '2026-12-01', ...counts }], refusals: [] });
}

/** Reads a CSV back cell by cell (RFC 4180) and checks it holds one table: every row as wide as its header. */
function oneTable(text: string): string[][] {
  const { records, problems } = readCsv(text);
  expect(problems).toEqual([]);
  expect(text.endsWith('\r\n')).toBe(true);
  for (const row of records) expect(row).toHaveLength(records[0]!.length);
  return records;
}

describe('statement amounts in the minor unit of ISO 4217', () => {
  it('knows the minor units of the codes named above, as ICU (CLDR) in this Node also gives them', () => {
    for (const [code, decimals] of [['EUR', 2], ['USD', 2], ['JPY', 0], ['KRW', 0], ['KWD', 3], ['BHD', 3], ['CLF', 4]] as const) {
      expect(minorUnitDecimals(code)).toBe(decimals);
    }
    // A second, outside reference: Intl.NumberFormat (CLDR currency data; it agrees with ISO 4217 on these).
    for (const code of ['EUR', 'USD', 'GBP', 'JPY', 'KRW', 'KWD', 'BHD', 'TND']) {
      expect(minorUnitDecimals(code)).toBe(new Intl.NumberFormat('en', { style: 'currency', currency: code }).resolvedOptions().maximumFractionDigits);
    }
    expect(() => minorUnitDecimals('XAU')).toThrow(/no minor unit/);
  });

  it('rounds half up at the minor unit: 0.005 EUR is 1 cent, 0.004999 is none, 4.5 yen is 5', () => {
    expect(microsToMinorUnits(5_000, 2)).toBe(1);
    expect(microsToMinorUnits(4_999, 2)).toBe(0);
    expect(microsToMinorUnits(225_000, 2)).toBe(23); // 22.5 cents: half up, not to even
    expect(microsToMinorUnits(4_500_000, 0)).toBe(5);
    expect(microsToMinorUnits(1_234_500, 3)).toBe(1_235);
    expect(microsToMinorUnits(-5_000, 2)).toBe(-1);
  });

  it('writes a EUR statement as one table of lines, amounts in cents worked by hand', () => {
    // Worked by hand (EUR, 2 decimals):
    //   base            49,990,000 micro-units               = 49.99
    //   queries         10 x 500 = 5,000 micro = 0.005       -> 0.01 (the half rounds up)
    //   transfer        2,500,000,000 B x 90,000 / 10^9 = 225,000 micro = 0.225 -> 0.23
    //   multiplications 1,000,000 x 2,500 / 10^6 = 2,500 micro = 0.0025 -> 0.00
    //   due 49.99 + 0.01 + 0.23 + 0.00 = 50.23; exact total 50,222,500 micro-units.
    const s = statement('EUR', { queryMicros: 500, gbMicros: 90_000, millionMultiplicationsMicros: 2_500, monthlyBaseMicros: 49_990_000 }, {
      queries: 10,
      bytesIn: 1_000_000_000,
      bytesOut: 1_500_000_000,
      multiplications: 1_000_000,
    });
    const rows = oneTable(statementCsv(s));
    expect(rows).toEqual([
      ['tenant', 'month', 'currency', 'item', 'quantity', 'unit', 'unit_price', 'priced_per', 'amount', 'amount_micros'],
      ['orrin-shelters', '2026-12', 'EUR', 'monthly_base', '1', 'month', '49.99', '1', '49.99', '49990000'],
      ['orrin-shelters', '2026-12', 'EUR', 'queries', '10', 'query', '0.0005', '1', '0.01', '5000'],
      ['orrin-shelters', '2026-12', 'EUR', 'transfer', '2500000000', 'byte', '0.09', '1000000000', '0.23', '225000'],
      ['orrin-shelters', '2026-12', 'EUR', 'multiplications', '1000000', 'multiplication', '0.0025', '1000000', '0.00', '2500'],
      ['orrin-shelters', '2026-12', 'EUR', 'total', '', '', '', '', '50.23', '50222500'],
    ]);
    expect(s.amountDue).toBe('50.23');
  });

  it('gives yen (0 decimals) as whole yen', () => {
    // Worked by hand (JPY, no decimals): base 1,000 yen; 3 queries x 1.5 yen = 4.5 -> 5;
    // 1,000,000 products at 0.4 yen per million = 0.4 -> 0. Due 1,005 yen.
    const s = statement('JPY', { queryMicros: 1_500_000, gbMicros: 0, millionMultiplicationsMicros: 400_000, monthlyBaseMicros: 1_000_000_000 }, {
      queries: 3,
      bytesIn: 10,
      bytesOut: 20,
      multiplications: 1_000_000,
    });
    const rows = oneTable(statementCsv(s));
    expect(rows.map((r) => [r[3], r[8], r[9]])).toEqual([
      ['item', 'amount', 'amount_micros'],
      ['monthly_base', '1000', '1000000000'],
      ['queries', '5', '4500000'],
      ['transfer', '0', '0'],
      ['multiplications', '0', '400000'],
      ['total', '1005', '1004900000'],
    ]);
  });

  it('puts the daily counts in a file of their own, one table', () => {
    const s = statement('EUR', { queryMicros: 500, gbMicros: 0, millionMultiplicationsMicros: 0, monthlyBaseMicros: 0 }, { queries: 4, bytesIn: 7, bytesOut: 9, multiplications: 11 });
    expect(oneTable(statementDaysCsv(s))).toEqual([
      ['tenant', 'month', 'day', 'queries', 'rejected', 'bytes_in', 'bytes_out', 'multiplications'],
      ['orrin-shelters', '2026-12', '2026-12-01', '4', '2', '7', '9', '11'],
    ]);
  });
});
