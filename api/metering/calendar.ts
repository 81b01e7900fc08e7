/** UTC calendar helpers for metering: days are `YYYY-MM-DD`, months `YYYY-MM` (ISO 8601). */
export function utcDay(now: Date): string {
  return now.toISOString().slice(0, 10);
}

export function utcMonth(now: Date): string {
  return now.toISOString().slice(0, 7);
}

/** Whole seconds from `now` to 00:00:00 UTC on the first day of the next month (at least 1). */
export function secondsToNextMonth(now: Date): number {
  const next = Date.UTC(now.getUTCFullYear(), now.getUTCMonth() + 1, 1);
  return Math.max(1, Math.ceil((next - now.getTime()) / 1000));
}

/** First and last day (inclusive) of a `YYYY-MM` month, as `YYYY-MM-DD`. */
export function monthDays(month: string): { first: string; last: string } {
  const [y, m] = month.split('-').map(Number) as [number, number];
  const lastDay = new Date(Date.UTC(y, m, 0)).getUTCDate();
  return { first: `${month}-01`, last: `${month}-${String(lastDay).padStart(2, '0')}` };
}

export const MONTH_PATTERN = /^(\d{4})-(0[1-9]|1[0-2])$/;
