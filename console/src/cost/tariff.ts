/**
 * A tenant's prices as its monthly statement states them (api/billing/statement.ts): integers in
 * micro-units (1/1,000,000) of `currency`; transfer per 10^9 bytes in plus out, work per million
 * modular products, as the statement bills them.
 */
export interface Tariff {
  currency: string;
  queryMicros: number;
  gbMicros: number;
  millionMultiplicationsMicros: number;
  monthlyBaseMicros: number;
}

export function currentMonth(now = new Date()): string {
  return now.toISOString().slice(0, 7);
}

const micros = (v: unknown) => (typeof v === 'number' && Number.isSafeInteger(v) && v >= 0 ? v : null);

/** Reads the tariff out of a statement body (JSON); null when it carries no whole tariff. */
export function tariffFromStatement(body: unknown): Tariff | null {
  const b = body as { currency?: unknown; tariff?: Record<string, unknown> | null } | null;
  const t = b?.tariff;
  if (!t || typeof t !== 'object' || typeof b.currency !== 'string') return null;
  const fields = [micros(t.queryMicros), micros(t.gbMicros), micros(t.millionMultiplicationsMicros), micros(t.monthlyBaseMicros)];
  if (fields.some((f) => f === null)) return null;
  const [queryMicros, gbMicros, millionMultiplicationsMicros, monthlyBaseMicros] = fields as number[];
  return { currency: b.currency, queryMicros: queryMicros!, gbMicros: gbMicros!, millionMultiplicationsMicros: millionMultiplicationsMicros!, monthlyBaseMicros: monthlyBaseMicros! };
}

/** One query's price in micro-units, before the statement's rounding: query + transfer + work. */
export interface QueryPrice {
  query: number;
  transfer: number;
  work: number;
  total: number;
}

export function queryPrice(t: Tariff, bytesMoved: number, products: number): QueryPrice {
  const query = t.queryMicros;
  const transfer = (t.gbMicros * bytesMoved) / 1e9;
  const work = (t.millionMultiplicationsMicros * products) / 1e6;
  return { query, transfer, work, total: query + transfer + work };
}

/** Micro-units as an amount of the currency, e.g. 1520.4 -> "EUR 0.001520". */
export function formatPrice(microUnits: number, currency: string, decimals = 6): string {
  return `${currency} ${(microUnits / 1e6).toFixed(decimals)}`;
}

/** Currency units typed by a person, as whole micro-units (the API's integers); null if not a price. */
export function parsePrice(text: string): number | null {
  const t = text.trim();
  if (!/^\d+(\.\d{1,6})?$/.test(t)) return null;
  const [whole, fraction = ''] = t.split('.');
  const micros = Number(whole) * 1_000_000 + Number(fraction.padEnd(6, '0'));
  return Number.isSafeInteger(micros) ? micros : null;
}
