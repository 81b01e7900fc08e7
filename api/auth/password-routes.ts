import { and, eq, ne } from 'drizzle-orm';
import { Hono } from 'hono';
import { getCookie } from 'hono/cookie';
import { z } from 'zod';
import { NewPasswordSchema } from '../accounts/account-schemas.ts';
import { recordAudit } from '../audit/record-audit.ts';
import { database } from '../db/client.ts';
import { sessions, users } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody } from '../http/params.ts';
import { clearEmail, lockedFor, recordFailure, throttleKeys } from './login-throttle.ts';
import { hashPassword, verifyPassword } from './password-hash.ts';
import { authenticate } from './principal.ts';
import { hashSecret } from './secrets.ts';
import { clientAddress } from './session-routes.ts';
import { SESSION_COOKIE } from './sessions.ts';

export const ChangePasswordBody = z.object({ currentPassword: z.string().min(1).max(1024), newPassword: NewPasswordSchema }).strict();

/**
 * `PUT /v1/session/password`: a signed-in person changes their own password, proving the current
 * one. Wrong guesses count against the same sign-in throttle, so this is no side door for guessing.
 * Every other session of the person ends; this one stays signed in.
 */
export const passwordRoutes = new Hono<AppBindings>().put('/session/password', limitBody(4096), async (c) => {
  const principal = await authenticate(c);
  const secret = getCookie(c, SESSION_COOKIE);
  if (principal.kind !== 'user' || !secret) {
    throw new ApiError(403, 'credential_wrong_kind', 'an admin token has no password: sign in as a person to change yours', 'authorization');
  }
  const body = await jsonBody(c.req.raw, ChangePasswordBody);
  const db = database(c.env);
  const [user] = await db.select().from(users).where(eq(users.id, principal.id)).limit(1);
  if (!user) throw new ApiError(401, 'session_unknown', 'the signed-in user no longer exists', 'cookie');
  const keys = await throttleKeys(user.email, clientAddress(c));
  const waitMs = await lockedFor(db, keys);
  if (waitMs > 0) {
    const seconds = Math.ceil(waitMs / 1000);
    c.header('Retry-After', String(seconds));
    throw new ApiError(429, 'login_throttled', `too many wrong passwords: try again in ${seconds} s`, 'currentPassword');
  }
  if (!(await verifyPassword(body.currentPassword, user.passwordHash)).ok) {
    await recordFailure(db, keys);
    throw new ApiError(403, 'password_wrong', 'currentPassword: that is not your current password', 'currentPassword');
  }
  await clearEmail(db, keys);
  const passwordHash = await hashPassword(body.newPassword);
  await db.batch([
    db.update(users).set({ passwordHash }).where(eq(users.id, user.id)),
    db.delete(sessions).where(and(eq(sessions.userId, user.id), ne(sessions.idHash, await hashSecret(secret)))),
  ]);
  await recordAudit(c, { action: 'user.password', target: `user ${user.email}`, tenantId: user.tenantId });
  return c.body(null, 204);
});
