import { and, eq, inArray, isNull } from 'drizzle-orm';
import { Hono } from 'hono';
import { z } from 'zod';
import { database } from '../db/client.ts';
import { credentials, datasets, keyMonths } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody, SlugSchema } from '../http/params.ts';
import { utcMonth } from '../metering/calendar.ts';
import { parseKeyScope } from './key-scope.ts';
import { recordAudit } from '../audit/record-audit.ts';
import { requireRole } from './principal.ts';
import { hashSecret, newSecret } from './secrets.ts';

export const CreateKeyBody = z
  .object({
    label: z.string().trim().min(1).max(100),
    /** Dataset slugs the key may read; absent means every dataset of the tenant, now and later. */
    datasets: z.array(SlugSchema).min(1).max(100).optional(),
    /** Answered queries per UTC calendar month; absent means no limit. */
    monthlyQuota: z.number().int().min(1).max(1_000_000_000_000).optional(),
  })
  .strict();

type KeyRow = typeof credentials.$inferSelect;

function keyView(row: KeyRow, usedThisMonth: number) {
  return {
    id: row.id,
    label: row.label,
    datasets: parseKeyScope(row.datasetScope),
    monthlyQuota: row.monthlyQuota,
    usedThisMonth,
    createdAt: row.createdAt,
    revokedAt: row.revokedAt,
  };
}

/** API keys for apps: shown once at creation, stored only as a hash, scoped, revocable, with quotas. */
/** Only tenant admins (and the operator, naming ?tenant=) make, list and revoke keys. */
const admin = requireRole('tenant_admin');

export const keyRoutes = new Hono<AppBindings>()
  .use('/keys', admin)
  .use('/keys/*', admin)
  .post('/keys', limitBody(16 * 1024), async (c) => {
    const body = await jsonBody(c.req.raw, CreateKeyBody);
    const db = database(c.env);
    const scope = body.datasets === undefined ? null : [...new Set(body.datasets)].sort();
    if (scope !== null) {
      const known = await db
        .select({ slug: datasets.slug })
        .from(datasets)
        .where(and(eq(datasets.tenantId, c.var.tenantId), inArray(datasets.slug, scope), isNull(datasets.deletedAt)));
      const missing = scope.filter((s) => !known.some((k) => k.slug === s));
      if (missing.length > 0) {
        const index = body.datasets!.indexOf(missing[0]!);
        throw new ApiError(404, 'dataset_unknown', `datasets[${index}]: dataset "${missing[0]}" does not exist for this tenant`, `datasets.${index}`);
      }
    }
    // 256 random bits (api/auth/secrets.ts); only the SHA-256 of the secret is stored.
    const secret = newSecret('query');
    const [row] = await db
      .insert(credentials)
      .values({
        id: crypto.randomUUID(),
        tenantId: c.var.tenantId,
        kind: 'query',
        secretHash: await hashSecret(secret),
        label: body.label,
        datasetScope: scope === null ? null : JSON.stringify(scope),
        monthlyQuota: body.monthlyQuota ?? null,
      })
      .returning();
    await recordAudit(c, { action: 'key.create', target: `key ${row!.id}`, detail: { label: row!.label, datasets: scope, monthlyQuota: row!.monthlyQuota } });
    return c.json({ ...keyView(row!, 0), secret, note: 'the secret is shown once; store it now' }, 201);
  })
  .get('/keys', async (c) => {
    const db = database(c.env);
    const rows = await db
      .select({ key: credentials, used: keyMonths.queries })
      .from(credentials)
      .leftJoin(keyMonths, and(eq(keyMonths.credentialId, credentials.id), eq(keyMonths.month, utcMonth(new Date()))))
      .where(and(eq(credentials.tenantId, c.var.tenantId), eq(credentials.kind, 'query')))
      .orderBy(credentials.createdAt);
    return c.json({ keys: rows.map((r) => keyView(r.key, r.used ?? 0)) });
  })
  .post('/keys/:id/revoke', async (c) => {
    const id = c.req.param('id');
    const db = database(c.env);
    const mine = and(eq(credentials.id, id), eq(credentials.tenantId, c.var.tenantId), eq(credentials.kind, 'query'));
    // Revoking twice keeps the first revocation time.
    await db.update(credentials).set({ revokedAt: new Date().toISOString() }).where(and(mine, isNull(credentials.revokedAt)));
    const [row] = await db.select({ id: credentials.id, revokedAt: credentials.revokedAt }).from(credentials).where(mine);
    if (!row) throw new ApiError(404, 'key_unknown', `API key ${id} does not exist for this tenant`, 'id');
    await recordAudit(c, { action: 'key.revoke', target: `key ${id}` });
    return c.json(row);
  });
