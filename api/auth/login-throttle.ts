import { eq, inArray, sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { loginThrottle } from '../db/schema.ts';
import { hashSecret } from './secrets.ts';

/**
 * Growing delays after failed sign-ins, kept per email and per client address (OWASP
 * Authentication Cheat Sheet, "Login Throttling"; the doubling schedule is common practice).
 * The first `free` failures cost nothing; each further one locks the key for twice as long as the
 * last, from 2 s up to 15 minutes. Counters are forgotten a day after their last failure; a good
 * sign-in clears its email's counter (never the address's, so one known account cannot reset it).
 */
export const THROTTLE = {
  email: { free: 3 },
  address: { free: 20 },
  firstLockMs: 2_000,
  maxLockMs: 15 * 60 * 1000,
  forgetAfterMs: 24 * 60 * 60 * 1000,
} as const;

/** Lock length after the n-th failure in a row: 0 for the free ones, then 2 s, 4 s, ... up to 15 min. */
export function lockAfterFailure(failures: number, free: number): number {
  if (failures <= free) return 0;
  const doublings = Math.min(failures - free - 1, 30);
  return Math.min(THROTTLE.firstLockMs * 2 ** doublings, THROTTLE.maxLockMs);
}

export interface ThrottleKeys {
  email: string;
  address: string;
}

/** The D1 keys for one attempt: hashes, so the table holds no email or address in the clear. */
export async function throttleKeys(email: string, address: string): Promise<ThrottleKeys> {
  return { email: 'email:' + (await hashSecret(email)), address: 'address:' + (await hashSecret(address)) };
}

/** Milliseconds the caller must still wait (0 when neither its email nor its address is locked). */
export async function lockedFor(db: Database, keys: ThrottleKeys, now = Date.now()): Promise<number> {
  const rows = await db.select().from(loginThrottle).where(inArray(loginThrottle.key, [keys.email, keys.address]));
  return Math.max(0, ...rows.map((r) => r.lockedUntil - now));
}

/** Counts one failure on both keys (one atomic upsert each) and sets their locks. */
export async function recordFailure(db: Database, keys: ThrottleKeys, now = Date.now()): Promise<void> {
  for (const [key, free] of [[keys.email, THROTTLE.email.free], [keys.address, THROTTLE.address.free]] as const) {
    const [row] = await db
      .insert(loginThrottle)
      .values({ key, failures: 1, lastFailureAt: now, lockedUntil: 0 })
      .onConflictDoUpdate({
        target: loginThrottle.key,
        set: {
          failures: sqlFailures(now),
          lastFailureAt: now,
        },
      })
      .returning({ failures: loginThrottle.failures });
    const lock = lockAfterFailure(row!.failures, free);
    if (lock > 0) await db.update(loginThrottle).set({ lockedUntil: now + lock }).where(eq(loginThrottle.key, key));
  }
}

export async function clearEmail(db: Database, keys: ThrottleKeys): Promise<void> {
  await db.delete(loginThrottle).where(eq(loginThrottle.key, keys.email));
}

/** failures + 1, or 1 again when the last failure is older than the forgetting window. */
function sqlFailures(now: number) {
  return sql`CASE WHEN ${loginThrottle.lastFailureAt} < ${now - THROTTLE.forgetAfterMs} THEN 1 ELSE ${loginThrottle.failures} + 1 END`;
}
