import { and, eq } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { sessions, tenants, users, type Role } from '../db/schema.ts';
import { ApiError } from '../http/api-error.ts';
import { base64UrlEncode, hashSecret } from './secrets.ts';

/** The session cookie: HttpOnly, Secure, SameSite=Strict, Path=/ (RFC 6265bis attributes). */
export const SESSION_COOKIE = 'nv_session';
/** The header a cookie-authenticated state-changing request carries its CSRF token in. */
export const CSRF_HEADER = 'x-nearveil-csrf';
/** A session ends 8 hours after sign-in (OWASP Session Management Cheat Sheet: 4-8 h absolute)... */
export const SESSION_ABSOLUTE_MS = 8 * 60 * 60 * 1000;
/** ...or after 30 minutes without a request (same cheat sheet: 15-30 min idle for sensitive apps). */
export const SESSION_IDLE_MS = 30 * 60 * 1000;
/** last_seen_at is written at most this often, so reads do not each cost a D1 write. */
const TOUCH_EVERY_MS = 60 * 1000;

export interface SessionUser {
  id: string;
  email: string;
  role: Role;
  tenantId: string | null;
  tenant: { slug: string; name: string } | null;
}

/** A new session: a 256-bit random secret for the cookie; D1 keeps only its SHA-256. */
export async function createSession(db: Database, userId: string, now = Date.now()): Promise<{ secret: string; expiresAt: number }> {
  const secret = base64UrlEncode(crypto.getRandomValues(new Uint8Array(32)));
  const expiresAt = now + SESSION_ABSOLUTE_MS;
  await db.insert(sessions).values({ idHash: await hashSecret(secret), userId, createdAt: now, lastSeenAt: now, expiresAt });
  return { secret, expiresAt };
}

/**
 * The CSRF token bound to a session: SHA-256 of the session secret under its own label, so it is
 * computed again on every request (nothing more to store) and reveals nothing of the secret.
 */
export async function csrfTokenFor(sessionSecret: string): Promise<string> {
  const digest = await crypto.subtle.digest('SHA-256', new TextEncoder().encode('nearveil csrf v1\0' + sessionSecret));
  return base64UrlEncode(new Uint8Array(digest));
}

/** The user behind a session secret; 401 when the session is unknown, ended, or its user disabled. */
export async function resolveSession(db: Database, secret: string, now = Date.now()): Promise<SessionUser> {
  const idHash = await hashSecret(secret);
  const [row] = await db
    .select({ session: sessions, user: users, tenant: { slug: tenants.slug, name: tenants.name } })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .leftJoin(tenants, eq(tenants.id, users.tenantId))
    .where(eq(sessions.idHash, idHash))
    .limit(1);
  if (!row) throw new ApiError(401, 'session_unknown', 'the session is not known (signed out or never signed in): sign in again with POST /v1/session', 'cookie');
  if (now >= row.session.expiresAt || now >= row.session.lastSeenAt + SESSION_IDLE_MS) {
    await db.delete(sessions).where(eq(sessions.idHash, idHash));
    throw new ApiError(401, 'session_expired', 'the session has ended: sign in again with POST /v1/session', 'cookie');
  }
  if (row.user.disabledAt !== null) throw new ApiError(401, 'user_disabled', 'this user was disabled', 'cookie');
  if (now - row.session.lastSeenAt >= TOUCH_EVERY_MS) {
    await db.update(sessions).set({ lastSeenAt: now }).where(and(eq(sessions.idHash, idHash)));
  }
  const { id, email, role, tenantId } = row.user;
  return { id, email, role, tenantId, tenant: row.tenant };
}

export async function deleteSession(db: Database, secret: string): Promise<void> {
  await db.delete(sessions).where(eq(sessions.idHash, await hashSecret(secret)));
}
