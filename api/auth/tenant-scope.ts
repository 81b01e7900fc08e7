import type { Context } from 'hono';
import { eq } from 'drizzle-orm';
import { database } from '../db/client.ts';
import { tenants } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';

/**
 * The tenant a tenant-level read acts on: the caller's own. `?tenant=SLUG` may only name the
 * caller's own tenant here; naming another needs the operator role.
 */
export async function tenantInScope(c: Context<AppBindings>): Promise<{ id: string; slug: string }> {
  const [own] = await database(c.env).select({ id: tenants.id, slug: tenants.slug }).from(tenants).where(eq(tenants.id, c.var.tenantId));
  if (!own) throw new ApiError(403, 'credential_unknown', 'the credential belongs to no tenant', 'authorization');
  const asked = c.req.query('tenant');
  if (asked !== undefined && asked !== own.slug) {
    throw new ApiError(403, 'operator_only', `tenant: only the operator may read another tenant ("${asked}")`, 'tenant');
  }
  return own;
}
