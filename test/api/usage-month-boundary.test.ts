import { env } from 'cloudflare:test';
import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { secondsToNextMonth, utcDay, utcMonth } from '../../api/metering/calendar.ts';
import { tinyZipCsv } from './open-data-sites.ts';
import { adminRequest, createTestTenant, oneQueryAMonth, type TestTenant } from './tenant-fixture.ts';

// The last millisecond of November 2026 and the first of December, UTC (ISO 8601; the Gregorian
// calendar gives November 30 days, from memory). Before today, so the key's registration is live.
const LAST_OF_NOVEMBER = '2026-11-30T23:59:59.999Z';
const FIRST_OF_DECEMBER = '2026-12-01T00:00:00.000Z';

interface UsageBody {
  month: string;
  totals: { queries: number };
  days: Array<{ day: string; queries: number }>;
}

/**
 * Metering and quotas are per UTC day and month, read from the clock when the query arrives
 * (api/metering/calendar.ts). The route reads `new Date()`; the test sets the clock with
 * vitest's fake Date (only Date is faked: timers and I/O run as usual), in the same isolate as
 * the Worker, so no product code changes for it.
 */
// On a shared 2-core machine the slowest test measured 1.3 s; the limit is about twice that.
describe('usage and quotas at a month boundary (UTC)', { timeout: 3_000 }, () => {
  let t: TestTenant;
  let fixture: Awaited<ReturnType<typeof oneQueryAMonth>>;

  beforeAll(async () => {
    t = await createTestTenant();
    fixture = await oneQueryAMonth(t, 'boundary', tinyZipCsv(6));
  });
  afterEach(() => vi.useRealTimers());

  /** One query at the given instant, with the clock set there for the whole request. */
  async function queryAt(iso: string): Promise<Response> {
    vi.useFakeTimers({ toFake: ['Date'] });
    vi.setSystemTime(new Date(iso));
    try {
      return await fixture.query();
    } finally {
      vi.useRealTimers();
    }
  }

  it('the calendar puts the two instants in different days and months', () => {
    expect([utcDay(new Date(LAST_OF_NOVEMBER)), utcMonth(new Date(LAST_OF_NOVEMBER))]).toEqual(['2026-11-30', '2026-11']);
    expect([utcDay(new Date(FIRST_OF_DECEMBER)), utcMonth(new Date(FIRST_OF_DECEMBER))]).toEqual(['2026-12-01', '2026-12']);
    // December has 31 days: 31 x 86,400 s to January 1.
    expect(secondsToNextMonth(new Date(FIRST_OF_DECEMBER))).toBe(31 * 86_400);
  });

  it('a query at 23:59:59.999 on November 30 and one at 00:00 on December 1 land in different days, months and quota slots', async () => {
    expect((await queryAt(LAST_OF_NOVEMBER)).status).toBe(200);
    // A quota of one per month: the next month's first query is answered.
    expect((await queryAt(FIRST_OF_DECEMBER)).status).toBe(200);
    const over = await queryAt('2026-12-01T00:00:00.001Z');
    expect(over.status).toBe(429);
    // RFC 9110 10.2.3 delay-seconds, to 2027-01-01T00:00Z: 31 days less a millisecond, rounded up.
    expect(over.headers.get('retry-after')).toBe(String(31 * 86_400));

    const days = await env.DB.prepare('SELECT day, queries FROM usage_daily WHERE credential_id = ? ORDER BY day').bind(fixture.keyId).all();
    expect(days.results).toEqual([
      { day: '2026-11-30', queries: 1 },
      { day: '2026-12-01', queries: 1 },
    ]);
    const slots = await env.DB.prepare('SELECT month, queries FROM key_months WHERE credential_id = ? ORDER BY month').bind(fixture.keyId).all();
    expect(slots.results).toEqual([
      { month: '2026-11', queries: 1 },
      { month: '2026-12', queries: 1 },
    ]);
    // The usage report of each month holds its own day only.
    for (const [month, day] of [['2026-11', '2026-11-30'], ['2026-12', '2026-12-01']]) {
      const report = (await (await adminRequest(t, 'GET', `/v1/admin/usage?dataset=boundary&month=${month}`)).json()) as UsageBody;
      expect(report.days.filter((d) => d.queries > 0).map((d) => d.day), month).toEqual([day]);
      expect(report.totals.queries, month).toBe(1);
    }
  });
});
