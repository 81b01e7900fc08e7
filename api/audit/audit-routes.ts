import { and, eq, sql, type SQL } from 'drizzle-orm';
import { Hono } from 'hono';
import { z } from 'zod';
import { requireRole } from '../auth/principal.ts';
import { database } from '../db/client.ts';
import { auditEvents, tenants } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';

const MAX_LIMIT = 500;

export const AuditQuery = z.object({
  limit: z.coerce.number().int().min(1).max(MAX_LIMIT).default(100),
  /** The `next` cursor of the previous page. */
  before: z.coerce.number().int().min(1).optional(),
});

/**
 * `GET /v1/admin/audit`: newest first. Tenant admins read their tenant's lines; the operator
 * reads every line (operator-wide ones included), or one tenant's with ?tenant=SLUG.
 */
export const auditRoutes = new Hono<AppBindings>().get('/audit', requireRole('tenant_admin', { tenant: 'optional' }), async (c) => {
  const parsed = AuditQuery.safeParse({ limit: c.req.query('limit'), before: c.req.query('before') });
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    const field = String(issue.path[0] ?? 'limit');
    throw new ApiError(400, 'invalid_' + field, `${field}: ${issue.message}`, field);
  }
  const { limit, before } = parsed.data;
  const conditions: SQL[] = [];
  const scope = c.var.tenantScope;
  if (scope !== null) conditions.push(eq(auditEvents.tenantId, scope));
  // SQLite's rowid grows with every insert: a total order even within one millisecond.
  if (before !== undefined) conditions.push(sql`${auditEvents}.rowid < ${before}`);
  const rows = await database(c.env)
    .select({ event: auditEvents, tenant: tenants.slug, seq: sql<number>`${auditEvents}.rowid` })
    .from(auditEvents)
    .leftJoin(tenants, eq(tenants.id, auditEvents.tenantId))
    .where(conditions.length > 0 ? and(...conditions) : undefined)
    .orderBy(sql`${auditEvents}.rowid DESC`)
    .limit(limit + 1);
  const page = rows.slice(0, limit);
  const last = page.at(-1);
  return c.json({
    events: page.map(({ event, tenant }) => ({
      id: event.id,
      at: event.createdAt,
      tenant,
      actor: { kind: event.actorKind, id: event.actorId, label: event.actorLabel },
      action: event.action,
      target: event.target,
      detail: event.detail === null ? null : (JSON.parse(event.detail) as unknown),
    })),
    next: rows.length > limit && last ? String(last.seq) : null,
  });
});
