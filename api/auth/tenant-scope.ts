import type { Context } from 'hono';
import { eq } from 'drizzle-orm';
import { database } from '../db/client.ts';
import { tenants } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';

/**
 * The tenant a tenant-level route acts on, as requireRole fixed it (api/auth/principal.ts): the
 * caller's own, or for the operator the one named by `?tenant=SLUG`.
 */
export async function tenantInScope(c: Context<AppBindings>): Promise<{ id: string; slug: string }> {
  const id = c.get('tenantId');
  if (!id) throw new ApiError(400, 'tenant_required', 'tenant: name the tenant to act on with ?tenant=SLUG', 'tenant');
  const [own] = await database(c.env).select({ id: tenants.id, slug: tenants.slug }).from(tenants).where(eq(tenants.id, id));
  if (!own) throw new ApiError(404, 'tenant_unknown', 'the tenant does not exist', 'tenant');
  return own;
}
