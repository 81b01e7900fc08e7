import { and, eq } from 'drizzle-orm';
import { Hono } from 'hono';
import { z } from 'zod';
import { database } from '../db/client.ts';
import { credentials } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody } from '../http/params.ts';
import { requireRole } from './principal.ts';
import { hashSecret, newSecret } from './secrets.ts';

const CreateKeyBody = z.object({ label: z.string().trim().min(1).max(100) }).strict();

/** API keys for apps: shown once at creation, stored only as a hash, revocable. */
/** Only tenant admins (and the operator, naming ?tenant=) make, list and revoke keys. */
const admin = requireRole('tenant_admin');

export const keyRoutes = new Hono<AppBindings>()
  .use('/keys', admin)
  .use('/keys/*', admin)
  .post('/keys', limitBody(4096), async (c) => {
    const body = await jsonBody(c.req.raw, CreateKeyBody);
    const apiKey = newSecret('query');
    const id = crypto.randomUUID();
    await database(c.env)
      .insert(credentials)
      .values({ id, tenantId: c.var.tenantId, kind: 'query', secretHash: await hashSecret(apiKey), label: body.label });
    return c.json({ id, label: body.label, apiKey, note: 'shown once; store it now' }, 201);
  })
  .get('/keys', async (c) => {
    const rows = await database(c.env)
      .select()
      .from(credentials)
      .where(and(eq(credentials.tenantId, c.var.tenantId), eq(credentials.kind, 'query')));
    return c.json({ keys: rows.map((r) => ({ id: r.id, label: r.label, createdAt: r.createdAt, revokedAt: r.revokedAt })) });
  })
  .post('/keys/:id/revoke', async (c) => {
    const id = c.req.param('id');
    const rows = await database(c.env)
      .update(credentials)
      .set({ revokedAt: new Date().toISOString() })
      .where(and(eq(credentials.id, id), eq(credentials.tenantId, c.var.tenantId), eq(credentials.kind, 'query')))
      .returning({ id: credentials.id, revokedAt: credentials.revokedAt });
    if (rows.length === 0) throw new ApiError(404, 'key_unknown', `API key ${id} does not exist for this tenant`, 'id');
    return c.json(rows[0]);
  });
