import { eq } from 'drizzle-orm';
import { Hono, type Context } from 'hono';
import { deleteCookie, getCookie, setCookie } from 'hono/cookie';
import { z } from 'zod';
import { database } from '../db/client.ts';
import { tenants, users } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody } from '../http/params.ts';
import { clearEmail, lockedFor, recordFailure, throttleKeys } from './login-throttle.ts';
import { hashPassword, UNKNOWN_USER_HASH, verifyPassword } from './password-hash.ts';
import { authenticate } from './principal.ts';
import { createSession, csrfTokenFor, deleteSession, resolveSession, SESSION_ABSOLUTE_MS, SESSION_COOKIE, type SessionUser } from './sessions.ts';

export const EmailSchema = z.string().trim().toLowerCase().max(254).pipe(z.email());
/** Sign-in passwords are bounded so a huge body cannot cost more than one ordinary hash. */
export const SignInBody = z.object({ email: EmailSchema, password: z.string().min(1).max(1024) }).strict();

/** Same words for an unknown email and a wrong password, so the answer reveals no account. */
const SIGN_IN_FAILED = 'the email or the password is wrong';

export const sessionRoutes = new Hono<AppBindings>()
  .post('/session', limitBody(4096), async (c) => {
    // A JSON content type cannot be sent cross-site without a CORS preflight, which we never
    // grant: no other site can sign a browser in to an account of its choosing (login CSRF).
    if (!/^application\/json\b/i.test(c.req.header('content-type') ?? '')) {
      throw new ApiError(415, 'content_type', 'body: expected Content-Type application/json', 'content-type');
    }
    const body = await jsonBody(c.req.raw, SignInBody);
    const db = database(c.env);
    const keys = await throttleKeys(body.email, clientAddress(c));
    const waitMs = await lockedFor(db, keys);
    if (waitMs > 0) {
      const seconds = Math.ceil(waitMs / 1000);
      c.header('Retry-After', String(seconds));
      throw new ApiError(429, 'login_throttled', `too many failed sign-ins: try again in ${seconds} s`, 'email');
    }
    const [user] = await db.select().from(users).where(eq(users.email, body.email)).limit(1);
    const check = await verifyPassword(body.password, user?.passwordHash ?? UNKNOWN_USER_HASH);
    if (!user || !check.ok || user.disabledAt !== null) {
      await recordFailure(db, keys);
      throw new ApiError(401, 'login_failed', SIGN_IN_FAILED, 'password');
    }
    await clearEmail(db, keys);
    // The work factor grew since this hash was made: store a new one while the password is at hand.
    if (check.needsRehash) await db.update(users).set({ passwordHash: await hashPassword(body.password) }).where(eq(users.id, user.id));
    const session = await createSession(db, user.id);
    setCookie(c, SESSION_COOKIE, session.secret, {
      httpOnly: true,
      secure: true,
      sameSite: 'Strict',
      path: '/',
      maxAge: Math.floor(SESSION_ABSOLUTE_MS / 1000),
    });
    c.header('Cache-Control', 'no-store');
    const [tenant] = user.tenantId ? await db.select({ slug: tenants.slug, name: tenants.name }).from(tenants).where(eq(tenants.id, user.tenantId)) : [];
    const view: SessionUser = { id: user.id, email: user.email, role: user.role, tenantId: user.tenantId, tenant: tenant ?? null };
    return c.json({ user: sessionUserView(view), csrfToken: await csrfTokenFor(session.secret) });
  })
  .get('/session', async (c) => {
    const secret = getCookie(c, SESSION_COOKIE);
    if (!secret) throw new ApiError(401, 'credential_missing', 'not signed in: sign in with POST /v1/session', 'cookie');
    const user = await resolveSession(database(c.env), secret);
    c.header('Cache-Control', 'no-store');
    return c.json({ user: sessionUserView(user), csrfToken: await csrfTokenFor(secret) });
  })
  .delete('/session', async (c) => {
    const secret = getCookie(c, SESSION_COOKIE);
    if (!secret) throw new ApiError(401, 'credential_missing', 'not signed in: there is no session to end', 'cookie');
    // Signing out changes state, so it needs the CSRF token like any other change.
    await authenticate(c);
    await deleteSession(database(c.env), secret);
    deleteCookie(c, SESSION_COOKIE, { httpOnly: true, secure: true, sameSite: 'Strict', path: '/' });
    return c.body(null, 204);
  });

export function sessionUserView(user: SessionUser) {
  return { id: user.id, email: user.email, role: user.role, tenant: user.tenant };
}

/** The caller's address as Cloudflare reports it; local runs without the header share one bucket. */
export function clientAddress(c: Context<AppBindings>): string {
  return c.req.header('cf-connecting-ip') ?? 'unknown';
}
