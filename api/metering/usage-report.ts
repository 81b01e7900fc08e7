import { and, asc, between, desc, eq, sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { credentials, datasets, rejectionsDaily, usageDaily } from '../db/schema.ts';
import { monthDays } from './calendar.ts';

export interface UsageCounts {
  queries: number;
  rejected: number;
  bytesIn: number;
  bytesOut: number;
  multiplications: number;
}

/** The month's refusals of one reason (a refusal code such as quota_exceeded or rate_limited) and API key. */
export interface RefusalCount {
  reason: string;
  keyId: string;
  keyLabel: string;
  count: number;
}

export interface UsageReport {
  month: string;
  totals: UsageCounts;
  days: Array<{ day: string } & UsageCounts>;
  /** Refusals by reason and key, most first: what a provider looks at when apps report failures. */
  refusals: RefusalCount[];
}

const zero = (): UsageCounts => ({ queries: 0, rejected: 0, bytesIn: 0, bytesOut: 0, multiplications: 0 });

/**
 * One tenant's usage for a UTC month, per day, summed from usage_daily (answered, billable)
 * and rejections_daily (refused, never billed). `datasetSlug` narrows it to one dataset.
 */
export async function usageReport(db: Database, tenantId: string, month: string, datasetSlug?: string): Promise<UsageReport> {
  const { first, last } = monthDays(month);
  const answered = await db
    .select({
      day: usageDaily.day,
      queries: sql<number>`sum(${usageDaily.queries})`,
      bytesIn: sql<number>`sum(${usageDaily.bytesIn})`,
      bytesOut: sql<number>`sum(${usageDaily.bytesOut})`,
      multiplications: sql<number>`sum(${usageDaily.multiplications})`,
    })
    .from(usageDaily)
    .innerJoin(datasets, eq(datasets.id, usageDaily.datasetId))
    .where(and(eq(datasets.tenantId, tenantId), between(usageDaily.day, first, last), datasetSlug === undefined ? undefined : eq(datasets.slug, datasetSlug)))
    .groupBy(usageDaily.day)
    .orderBy(asc(usageDaily.day));
  const refused = await db
    .select({ day: rejectionsDaily.day, rejected: sql<number>`sum(${rejectionsDaily.queries})` })
    .from(rejectionsDaily)
    .where(
      and(
        eq(rejectionsDaily.tenantId, tenantId),
        between(rejectionsDaily.day, first, last),
        datasetSlug === undefined ? undefined : eq(rejectionsDaily.datasetSlug, datasetSlug),
      ),
    )
    .groupBy(rejectionsDaily.day);
  const refusals = await db
    .select({ reason: rejectionsDaily.reason, keyId: rejectionsDaily.credentialId, keyLabel: credentials.label, count: sql<number>`sum(${rejectionsDaily.queries})` })
    .from(rejectionsDaily)
    .innerJoin(credentials, eq(credentials.id, rejectionsDaily.credentialId))
    .where(
      and(
        eq(rejectionsDaily.tenantId, tenantId),
        between(rejectionsDaily.day, first, last),
        datasetSlug === undefined ? undefined : eq(rejectionsDaily.datasetSlug, datasetSlug),
      ),
    )
    .groupBy(rejectionsDaily.reason, rejectionsDaily.credentialId)
    .orderBy(desc(sql`sum(${rejectionsDaily.queries})`), asc(rejectionsDaily.reason));
  const byDay = new Map<string, UsageCounts>();
  const at = (day: string) => byDay.get(day) ?? byDay.set(day, zero()).get(day)!;
  for (const row of answered) Object.assign(at(row.day), { queries: row.queries, bytesIn: row.bytesIn, bytesOut: row.bytesOut, multiplications: row.multiplications });
  for (const row of refused) at(row.day).rejected = row.rejected;
  const days = [...byDay.entries()].sort(([a], [b]) => a.localeCompare(b)).map(([day, counts]) => ({ day, ...counts }));
  const totals = zero();
  for (const d of days) for (const k of Object.keys(totals) as Array<keyof UsageCounts>) totals[k] += d[k];
  return { month, totals, days, refusals };
}
