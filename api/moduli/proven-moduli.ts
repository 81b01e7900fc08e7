import { and, eq, gt, lt } from 'drizzle-orm';
import { database, type Database } from '../db/client.ts';
import { modulusRegistrations, provenModuli } from '../db/schema.ts';
import { modulusFingerprint } from '../../core/modulus-proof/fingerprint.ts';
import type { Env } from '../env.ts';
import { ApiError } from '../http/api-error.ts';

/** Days a registration is kept (MODULUS_LIFETIME_DAYS): clients rotate keys well before. */
export function modulusLifetimeMs(env: Env): number {
  return Number(env.MODULUS_LIFETIME_DAYS ?? 30) * 24 * 3600 * 1000;
}

export interface ProvenModulus {
  modulusSha256: string;
  modulusBits: number;
  registeredAt: number;
  expiresAt: number;
}

// Fingerprints this isolate has seen proven, with their expiry: a query costs a map lookup, and
// D1 only the first time an isolate meets a modulus. Only positive answers are kept (a modulus
// not yet registered may be registered a moment later).
const MAX_REMEMBERED = 20_000;
const remembered = new Map<string, number>();

function remember(row: ProvenModulus): void {
  if (remembered.size >= MAX_REMEMBERED) remembered.delete(remembered.keys().next().value!);
  remembered.set(row.modulusSha256, row.expiresAt);
}

/** The registration of a modulus by fingerprint, or null when none is live at `now`. */
export async function findProvenModulus(db: Database, fingerprint: string, now: number): Promise<ProvenModulus | null> {
  const [row] = await db
    .select()
    .from(provenModuli)
    .where(and(eq(provenModuli.modulusSha256, fingerprint), gt(provenModuli.expiresAt, now)));
  if (!row) return null;
  remember(row);
  return row;
}

/** True when the modulus is registered and live: the isolate's memory first, then D1. */
export async function isProven(db: Database, fingerprint: string, now: number): Promise<boolean> {
  const expiresAt = remembered.get(fingerprint);
  if (expiresAt !== undefined && expiresAt > now) return true;
  return (await findProvenModulus(db, fingerprint, now)) !== null;
}

/**
 * Refuses a query whose modulus has no live registration, before any of its values is read:
 * 403 `modulus_unproven` (field "modulus"), counted among the key's refusals, never billed.
 */
export async function requireProvenModulus(db: Database, n: bigint, now = Date.now()): Promise<void> {
  if (await isProven(db, modulusFingerprint(n), now)) return;
  throw new ApiError(
    403,
    'modulus_unproven',
    'modulus: this modulus has not been proven to this server (or its registration expired); send its proof once to POST /v1/moduli, then ask again (the nearveil SDK and CLI do both by themselves)',
    'modulus',
  );
}

/** Keeps a modulus whose proof was verified (replacing a row left from an expired registration). */
export async function rememberProvenModulus(db: Database, row: ProvenModulus): Promise<void> {
  await db.insert(provenModuli).values(row).onConflictDoUpdate({ target: provenModuli.modulusSha256, set: { registeredAt: row.registeredAt, expiresAt: row.expiresAt } });
  remember(row);
}

/** The cron's part: registrations past their expiry, and rate counters older than two days. */
export async function forgetExpiredModuli(env: Env, now = Date.now()): Promise<void> {
  const db = database(env);
  const twoDaysAgo = new Date(now - 2 * 24 * 3600 * 1000).toISOString().slice(0, 13);
  await db.batch([
    db.delete(provenModuli).where(lt(provenModuli.expiresAt, now)),
    db.delete(modulusRegistrations).where(lt(modulusRegistrations.hour, twoDaysAgo)),
  ]);
}
