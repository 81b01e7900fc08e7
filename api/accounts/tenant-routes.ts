import { asc, count, eq, isNull } from 'drizzle-orm';
import { Hono } from 'hono';
import { requireRole } from '../auth/principal.ts';
import { recordAudit } from '../audit/record-audit.ts';
import { database } from '../db/client.ts';
import { datasets, tenants, users } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody } from '../http/params.ts';
import { CreateTenantBody, randomPassword } from './account-schemas.ts';
import { insertUser, userView } from './user-repository.ts';

const operator = requireRole('operator');

/** `/v1/operator/tenants`: the operator adds providers (with a first admin) and lists them. */
export const tenantRoutes = new Hono<AppBindings>()
  .use('/tenants', operator)
  .use('/tenants/*', operator)
  .post('/tenants', limitBody(4096), async (c) => {
    const body = await jsonBody(c.req.raw, CreateTenantBody);
    const db = database(c.env);
    const inserted = await db.insert(tenants).values({ id: crypto.randomUUID(), slug: body.slug, name: body.name }).onConflictDoNothing().returning();
    if (inserted.length === 0) throw new ApiError(409, 'tenant_exists', `tenant "${body.slug}" exists already`, 'slug');
    const tenant = inserted[0]!;
    let admin: (ReturnType<typeof userView> & { initialPassword?: string }) | null = null;
    if (body.admin) {
      const password = body.admin.password ?? randomPassword();
      try {
        const row = await insertUser(db, { email: body.admin.email, role: 'tenant_admin', tenantId: tenant.id, password });
        admin = { ...userView(row, tenant.slug), ...(body.admin.password === undefined ? { initialPassword: password } : {}) };
      } catch (err) {
        // No half-made tenant: without its admin, the new tenant is taken back.
        await db.delete(tenants).where(eq(tenants.id, tenant.id));
        throw err;
      }
    }
    await recordAudit(c, { action: 'tenant.create', target: `tenant ${tenant.slug}`, detail: { name: tenant.name }, tenantId: tenant.id });
    if (admin) await recordAudit(c, { action: 'user.create', target: `user ${admin.email}`, detail: { id: admin.id, role: admin.role }, tenantId: tenant.id });
    return c.json({ slug: tenant.slug, name: tenant.name, createdAt: tenant.createdAt, admin }, 201);
  })
  .get('/tenants', async (c) => {
    const db = database(c.env);
    const [rows, userCounts, datasetCounts] = await Promise.all([
      db.select().from(tenants).orderBy(asc(tenants.slug)),
      db.select({ tenantId: users.tenantId, n: count() }).from(users).groupBy(users.tenantId),
      db.select({ tenantId: datasets.tenantId, n: count() }).from(datasets).where(isNull(datasets.deletedAt)).groupBy(datasets.tenantId),
    ]);
    const countOf = (list: Array<{ tenantId: string | null; n: number }>, id: string) => list.find((r) => r.tenantId === id)?.n ?? 0;
    return c.json({
      tenants: rows.map((t) => ({ slug: t.slug, name: t.name, createdAt: t.createdAt, users: countOf(userCounts, t.id), datasets: countOf(datasetCounts, t.id) })),
    });
  });
