import { eq } from 'drizzle-orm';
import type { Context, MiddlewareHandler } from 'hono';
import { getCookie } from 'hono/cookie';
import { database } from '../db/client.ts';
import { tenants, type Role } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { constantTimeEqualText } from './constant-time.ts';
import { bearerCredential } from './require-credential.ts';
import { CSRF_HEADER, csrfTokenFor, resolveSession, SESSION_COOKIE } from './sessions.ts';

export type { Principal } from './principal-kind.ts';
import type { Principal } from './principal-kind.ts';

/** operator > tenant_admin > tenant_editor: a higher role may do all a lower one may. */
const RANK: Record<Role, number> = { tenant_editor: 1, tenant_admin: 2, operator: 3 };

/** Per RFC 9110 section 9.2.1, these methods change nothing, so they need no CSRF token. */
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Resolves the principal once per request: a Bearer admin token when an Authorization header is
 * sent (no CSRF token needed: browsers never attach it on their own), else the session cookie,
 * whose state-changing requests must carry the session's CSRF token in x-nearveil-csrf.
 */
export async function authenticate(c: Context<AppBindings>): Promise<Principal> {
  const known = c.get('principal');
  if (known) return known;
  let principal: Principal;
  if (c.req.header('authorization') !== undefined) {
    const row = await bearerCredential(c, 'admin');
    c.set('credentialId', row.id);
    principal = { kind: 'credential', id: row.id, role: 'tenant_admin', tenantId: row.tenantId, tenantSlug: row.tenantSlug, label: row.label };
  } else {
    const secret = getCookie(c, SESSION_COOKIE);
    if (!secret) {
      throw new ApiError(401, 'credential_missing', 'sign in first (POST /v1/session) or send "Authorization: Bearer <admin token>"', 'authorization');
    }
    const user = await resolveSession(database(c.env), secret);
    if (!SAFE_METHODS.has(c.req.method)) await checkCsrf(c, secret);
    principal = { kind: 'user', id: user.id, role: user.role, tenantId: user.tenantId, tenantSlug: user.tenant?.slug ?? null, label: user.email };
  }
  c.set('principal', principal);
  return principal;
}

async function checkCsrf(c: Context<AppBindings>, sessionSecret: string): Promise<void> {
  const sent = c.req.header(CSRF_HEADER);
  if (!sent) throw new ApiError(403, 'csrf_missing', `a signed-in request that changes something must send the session's CSRF token in ${CSRF_HEADER}`, CSRF_HEADER);
  if (!constantTimeEqualText(sent, await csrfTokenFor(sessionSecret))) {
    throw new ApiError(403, 'csrf_mismatch', `${CSRF_HEADER} does not match this session's CSRF token`, CSRF_HEADER);
  }
}

export interface RoleOptions {
  /**
   * 'required' (default below operator): the request acts on one tenant, the caller's own; the
   * operator names it with ?tenant=SLUG. 'optional' (default for operator routes): an operator
   * without ?tenant acts across all tenants, and c.var.tenantScope is null.
   */
  tenant?: 'required' | 'optional';
}

/**
 * Requires at least `role`, then fixes the tenant the request acts on: c.var.tenantId (and
 * c.var.tenantScope). A tenant user naming another tenant with ?tenant= gets 403, never its data.
 */
export function requireRole(role: Role, options: RoleOptions = {}): MiddlewareHandler<AppBindings> {
  const tenantRule = options.tenant ?? (role === 'operator' ? 'optional' : 'required');
  return async function roleCheck(c, next) {
    const principal = await authenticate(c);
    if (RANK[principal.role] < RANK[role]) {
      throw new ApiError(403, 'role_forbidden', `this needs the ${role} role (or higher); ${principal.label} is ${principal.role}`, 'role');
    }
    await scopeTenant(c, principal, tenantRule);
    await next();
  };
}

async function scopeTenant(c: Context<AppBindings>, principal: Principal, rule: 'required' | 'optional'): Promise<void> {
  const asked = c.req.query('tenant');
  if (principal.role !== 'operator') {
    if (asked !== undefined && asked !== principal.tenantSlug) {
      throw new ApiError(403, 'tenant_forbidden', `tenant "${asked}" is not yours`, 'tenant');
    }
    c.set('tenantId', principal.tenantId!);
    c.set('tenantScope', principal.tenantId);
    return;
  }
  if (asked === undefined || asked === '') {
    if (rule === 'required') throw new ApiError(400, 'tenant_required', 'tenant: the operator names the tenant to act on with ?tenant=SLUG', 'tenant');
    c.set('tenantScope', null);
    return;
  }
  const [row] = await database(c.env).select({ id: tenants.id }).from(tenants).where(eq(tenants.slug, asked)).limit(1);
  if (!row) throw new ApiError(404, 'tenant_unknown', `tenant "${asked}" does not exist`, 'tenant');
  c.set('tenantId', row.id);
  c.set('tenantScope', row.id);
}
