import { and, eq, sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { keyMonths } from '../db/schema.ts';

/**
 * Monthly quotas of API keys. A query takes its slot *before* it is answered, with one
 * conditional upsert (`... DO UPDATE SET queries = queries + 1 WHERE queries < quota RETURNING`).
 * SQLite (D1) runs each statement atomically, so however many queries race, at most `quota`
 * slots are ever handed out in a month: no overshoot. A query that then fails gives its slot back.
 * The counter is kept for keys without a quota too, so a quota set later counts the whole month.
 *
 * The one inexactness is on the safe side: a query whose Worker dies between taking its slot and
 * answering keeps the slot (the key may see 429 one query early per such crash), and while a
 * failing query still holds its slot a racing query may be refused.
 */
export async function takeQuotaSlot(db: Database, credentialId: string, month: string, quota: number | null): Promise<boolean> {
  if (quota !== null && quota < 1) return false;
  const insert = db.insert(keyMonths).values({ credentialId, month, queries: 1 });
  const increment = { queries: sql`${keyMonths.queries} + 1` };
  const target = [keyMonths.credentialId, keyMonths.month];
  const taken = await (quota === null
    ? insert.onConflictDoUpdate({ target, set: increment })
    : insert.onConflictDoUpdate({ target, set: increment, setWhere: sql`${keyMonths.queries} < ${quota}` })
  ).returning({ queries: keyMonths.queries });
  return taken.length === 1;
}

/** Gives back a slot taken by a query that was not answered after all. */
export async function releaseQuotaSlot(db: Database, credentialId: string, month: string): Promise<void> {
  await db
    .update(keyMonths)
    .set({ queries: sql`max(${keyMonths.queries} - 1, 0)` })
    .where(and(eq(keyMonths.credentialId, credentialId), eq(keyMonths.month, month)));
}

/** Slots taken this month (answered queries plus those in flight). */
export async function slotsTaken(db: Database, credentialId: string, month: string): Promise<number> {
  const [row] = await db
    .select({ queries: keyMonths.queries })
    .from(keyMonths)
    .where(and(eq(keyMonths.credentialId, credentialId), eq(keyMonths.month, month)));
  return row?.queries ?? 0;
}
