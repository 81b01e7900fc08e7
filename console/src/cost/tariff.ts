/** A tenant's prices, as read from a monthly statement (fields named by the billing routes). */
export interface Tariff {
  currency: string;
  perQuery: number;
  perMegabyte: number;
  perMillionProducts: number;
}

export function currentMonth(now = new Date()): string {
  return now.toISOString().slice(0, 7);
}

const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : 0);

/** Reads the tariff out of a statement body; null when it carries none. */
export function tariffFromStatement(body: unknown): Tariff | null {
  const t = (body as { tariff?: Record<string, unknown> | null } | null)?.tariff;
  if (!t || typeof t !== 'object') return null;
  return {
    currency: typeof t.currency === 'string' ? t.currency : '',
    perQuery: num(t.perQuery),
    perMegabyte: num(t.perMegabyte),
    perMillionProducts: num(t.perMillionProducts ?? t.perMillionMultiplications),
  };
}
