import { and, asc, eq, type SQL } from 'drizzle-orm';
import { Hono } from 'hono';
import { requireRole } from '../auth/principal.ts';
import { recordAudit } from '../audit/record-audit.ts';
import { hashPassword } from '../auth/password-hash.ts';
import { database } from '../db/client.ts';
import { sessions, tenants, users } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody } from '../http/params.ts';
import { CreateUserBody, randomPassword, UpdateUserBody } from './account-schemas.ts';
import { insertUser, tenantSlugOf, userView } from './user-repository.ts';

/** Tenant admins manage their own tenant's users; the operator manages anyone's. */
const manager = requireRole('tenant_admin', { tenant: 'optional' });

export const userRoutes = new Hono<AppBindings>()
  .use('/users', manager)
  .use('/users/*', manager)
  .get('/users', async (c) => {
    const where: SQL | undefined = c.var.tenantScope === null ? undefined : eq(users.tenantId, c.var.tenantScope);
    const rows = await database(c.env)
      .select({ user: users, tenant: tenants.slug })
      .from(users)
      .leftJoin(tenants, eq(tenants.id, users.tenantId))
      .where(where)
      .orderBy(asc(users.createdAt), asc(users.email));
    return c.json({ users: rows.map((r) => userView(r.user, r.tenant)) });
  })
  .post('/users', limitBody(4096), async (c) => {
    const body = await jsonBody(c.req.raw, CreateUserBody);
    const principal = c.var.principal;
    let tenantId: string | null;
    if (body.role === 'operator') {
      if (principal.role !== 'operator') throw new ApiError(403, 'role_forbidden', 'only the operator may add another operator', 'role');
      if (c.var.tenantScope !== null) throw new ApiError(400, 'operator_has_no_tenant', 'an operator belongs to no tenant: leave out ?tenant=', 'tenant');
      tenantId = null;
    } else {
      if (c.var.tenantScope === null) throw new ApiError(400, 'tenant_required', 'tenant: name the tenant of the new user with ?tenant=SLUG', 'tenant');
      tenantId = c.var.tenantScope;
    }
    const password = body.password ?? randomPassword();
    const db = database(c.env);
    const row = await insertUser(db, { email: body.email, role: body.role, tenantId, password });
    await recordAudit(c, { action: 'user.create', target: `user ${row.email}`, detail: { id: row.id, role: row.role }, tenantId });
    const view = userView(row, await tenantSlugOf(db, tenantId));
    return c.json({ ...view, ...(body.password === undefined ? { initialPassword: password, note: 'the password is shown once; pass it on safely' } : {}) }, 201);
  })
  .patch('/users/:id', limitBody(4096), async (c) => {
    const body = await jsonBody(c.req.raw, UpdateUserBody);
    const db = database(c.env);
    const id = c.req.param('id');
    const conditions = [eq(users.id, id)];
    if (c.var.tenantScope !== null) conditions.push(eq(users.tenantId, c.var.tenantScope));
    const [user] = await db.select().from(users).where(and(...conditions)).limit(1);
    if (!user) throw new ApiError(404, 'user_unknown', `user ${id} does not exist in this tenant`, 'id');
    const principal = c.var.principal;
    if (user.id === principal.id && (body.disabled === true || (body.role !== undefined && body.role !== user.role))) {
      throw new ApiError(409, 'own_account', 'you cannot disable yourself or change your own role; ask another admin', 'id');
    }
    if (body.role !== undefined && (body.role === 'operator') !== (user.role === 'operator')) {
      throw new ApiError(400, 'invalid_role', 'role: an operator stays an operator and a tenant user stays in its tenant', 'role');
    }
    const changes: Partial<typeof users.$inferInsert> = {};
    if (body.role !== undefined) changes.role = body.role;
    if (body.disabled !== undefined) changes.disabledAt = body.disabled ? (user.disabledAt ?? new Date().toISOString()) : null;
    if (body.password !== undefined) changes.passwordHash = await hashPassword(body.password);
    // A disabled user or a new password ends every session of that user at once.
    const endSessions = body.disabled === true || body.password !== undefined;
    await db.batch([
      db.update(users).set(changes).where(eq(users.id, user.id)),
      ...(endSessions ? [db.delete(sessions).where(eq(sessions.userId, user.id))] : []),
    ]);
    const [updated] = await db.select().from(users).where(eq(users.id, user.id));
    await recordAudit(c, {
      action: 'user.update',
      target: `user ${user.email}`,
      detail: { id: user.id, ...(body.role !== undefined ? { role: [user.role, body.role] } : {}), ...(body.disabled !== undefined ? { disabled: body.disabled } : {}), ...(body.password !== undefined ? { passwordReset: true } : {}) },
      tenantId: user.tenantId,
    });
    return c.json(userView(updated!, await tenantSlugOf(db, user.tenantId)));
  });
