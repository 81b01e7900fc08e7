import { describe, expect, it } from 'vitest';
import { buildStatement } from '../../api/billing/statement.ts';
import { formatPrice, parsePrice, queryPrice, tariffFromStatement } from '../../console/src/cost/tariff.ts';

// The console prices one query from the manifest; the server bills the month from its meter.
// They must agree: N identical queries on the statement cost N times the console's price, up to
// the statement's rounding of each line to a whole micro-unit (three lines: at most 1.5).
const tariff = { fromMonth: '2026-12', queryMicros: 1_500, gbMicros: 90_000, millionMultiplicationsMicros: 2_500, monthlyBaseMicros: 49_990_000 };

function statementFor(queries: number, up: number, down: number, products: number) {
  const counts = { queries, rejected: 0, bytesIn: queries * up, bytesOut: queries * down, multiplications: queries * products };
  return buildStatement('demo', 'EUR', tariff, { month: '2026-12', totals: counts, days: [{ day: '2026-12-01', ...counts }], refusals: [] });
}

describe('the price per query shown in the console', () => {
  it('reads the tariff out of a statement exactly as the server writes it', () => {
    const statement = statementFor(1, 109_322, 245_770, 47_651);
    const read = tariffFromStatement(JSON.parse(JSON.stringify(statement)));
    expect(read).toEqual({ currency: 'EUR', queryMicros: 1_500, gbMicros: 90_000, millionMultiplicationsMicros: 2_500, monthlyBaseMicros: 49_990_000 });
    expect(tariffFromStatement({ currency: 'EUR', tariff: { ...tariff, gbMicros: -1 } })).toBeNull();
    expect(tariffFromStatement({ error: { code: 'tariff_missing' } })).toBeNull();
  });

  it.each([
    // The demo's measured bytes and products (README), a 100,000-site answer, a tiny one.
    [1, 109_322, 245_770, 47_651],
    [1_000, 109_322, 245_770, 47_651],
    [37, 1_351_690, 1_351_690, 2_268_177],
    [250_000, 2_600, 5_000, 12],
  ])('%i queries of %i bytes up, %i down and %i products: statement = N x price', (n, up, down, products) => {
    const price = queryPrice({ currency: 'EUR', ...tariff }, up + down, products);
    const statement = statementFor(n, up, down, products);
    const billed = statement.totalMicros - tariff.monthlyBaseMicros;
    expect(Math.abs(billed - n * price.total)).toBeLessThanOrEqual(1.5);
    expect(price.total).toBeCloseTo(price.query + price.transfer + price.work, 9);
  });

  it('writes amounts in currency units from micro-units', () => {
    expect(formatPrice(1_520.4, 'EUR')).toBe('EUR 0.001520');
    expect(formatPrice(49_990_000, 'EUR', 2)).toBe('EUR 49.99');
  });

  it('reads prices the operator types into whole micro-units, refusing what is not a price', () => {
    expect(parsePrice('0.0015')).toBe(1_500);
    expect(parsePrice(' 49.99 ')).toBe(49_990_000);
    expect(parsePrice('1')).toBe(1_000_000);
    expect(parsePrice('0.000001')).toBe(1);
    for (const bad of ['0.0000001', '-1', '1e3', 'abc', '', '1,5', '.5']) expect(parsePrice(bad), bad).toBeNull();
    for (const micros of [0, 1, 1_500, 90_000, 49_990_000]) expect(parsePrice(formatPrice(micros, 'EUR').slice(4))).toBe(micros);
  });
});
