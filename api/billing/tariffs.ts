import { and, desc, eq, lte } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { tariffs } from '../db/schema.ts';
import type { Tariff } from './statement.ts';

const view = (row: typeof tariffs.$inferSelect): Tariff & { setAt: string; setBy: string } => ({
  fromMonth: row.fromMonth,
  queryMicros: row.queryMicros,
  gbMicros: row.gbMicros,
  millionMultiplicationsMicros: row.millionMultiplicationsMicros,
  monthlyBaseMicros: row.monthlyBaseMicros,
  setAt: row.setAt,
  setBy: row.setBy,
});

/** The tariff pricing `month`: the newest one set from that month or earlier, or null. */
export async function tariffFor(db: Database, tenantId: string, month: string) {
  const [row] = await db
    .select()
    .from(tariffs)
    .where(and(eq(tariffs.tenantId, tenantId), lte(tariffs.fromMonth, month)))
    .orderBy(desc(tariffs.fromMonth))
    .limit(1);
  return row ? view(row) : null;
}

export async function tariffHistory(db: Database, tenantId: string) {
  const rows = await db.select().from(tariffs).where(eq(tariffs.tenantId, tenantId)).orderBy(desc(tariffs.fromMonth));
  return rows.map(view);
}

/** Sets (or replaces) the tariff starting at `tariff.fromMonth`. */
export async function setTariff(db: Database, tenantId: string, tariff: Tariff, setBy: string) {
  const values = { tenantId, ...tariff, setBy, setAt: new Date().toISOString() };
  const [row] = await db
    .insert(tariffs)
    .values(values)
    .onConflictDoUpdate({ target: [tariffs.tenantId, tariffs.fromMonth], set: values })
    .returning();
  return view(row!);
}
