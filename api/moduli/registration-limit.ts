import { and, eq, sql } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { modulusRegistrations } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { ApiError } from '../http/api-error.ts';

/**
 * Per-key limits on checking modulus proofs, so registration cannot be used to burn server CPU.
 * An honest client's proof never fails and is sent once per key (a few times a month), so
 * refused proofs get a tight limit and all proofs a generous one: MODULUS_PROOFS_PER_HOUR
 * (default 600) and MODULUS_REFUSED_PROOFS_PER_HOUR (default 20) per API key and UTC hour.
 * A proof takes its slot with one conditional upsert before it is checked, as quota slots do
 * (api/metering/quota.ts), so racing registrations cannot pass the limit on checked proofs;
 * refusals are counted after the check, so a burst of bad proofs may pass theirs by as many as
 * raced.
 */
export function registrationLimits(env: Env): { checked: number; refused: number } {
  return { checked: Number(env.MODULUS_PROOFS_PER_HOUR ?? 600), refused: Number(env.MODULUS_REFUSED_PROOFS_PER_HOUR ?? 20) };
}

/** `YYYY-MM-DDTHH`, the UTC hour the counters are kept by. */
export function utcHour(now: Date): string {
  return now.toISOString().slice(0, 13);
}

/** Takes a slot for checking one proof, or throws 429 `registration_throttled` with Retry-After. */
export async function takeProofSlot(db: Database, credentialId: string, now: Date, limits: { checked: number; refused: number }): Promise<void> {
  const hour = utcHour(now);
  const taken = await db
    .insert(modulusRegistrations)
    .values({ credentialId, hour, checked: 1, refused: 0 })
    .onConflictDoUpdate({
      target: [modulusRegistrations.credentialId, modulusRegistrations.hour],
      set: { checked: sql`${modulusRegistrations.checked} + 1` },
      setWhere: sql`${modulusRegistrations.checked} < ${limits.checked} AND ${modulusRegistrations.refused} < ${limits.refused}`,
    })
    .returning({ checked: modulusRegistrations.checked });
  if (taken.length === 1) return;
  const retryAfter = Math.max(1, Math.ceil((Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate(), now.getUTCHours() + 1) - now.getTime()) / 1000));
  throw new ApiError(
    429,
    'registration_throttled',
    `this API key has used its modulus proofs for the hour (at most ${limits.checked} checked and ${limits.refused} refused); try again in ${retryAfter} s`,
    'authorization',
    { 'Retry-After': String(retryAfter) },
  );
}

/** Counts a refused proof against the key's hour. */
export async function countRefusedProof(db: Database, credentialId: string, now: Date): Promise<void> {
  await db
    .update(modulusRegistrations)
    .set({ refused: sql`${modulusRegistrations.refused} + 1` })
    .where(and(eq(modulusRegistrations.credentialId, credentialId), eq(modulusRegistrations.hour, utcHour(now))));
}
