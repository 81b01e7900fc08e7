import { and, eq, inArray, isNull } from 'drizzle-orm';
import { Hono } from 'hono';
import { z } from 'zod';
import { database } from '../db/client.ts';
import { credentials, datasets, keyMonths, keyOrigins } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody, SlugSchema } from '../http/params.ts';
import { utcMonth } from '../metering/calendar.ts';
import { DEFAULT_REQUESTS_PER_MINUTE, OriginListSchema, parseOrigins, SELF_ORIGIN } from './browser-keys.ts';
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
    /** 'server' (default): kept secret by an app's server. 'browser': public, limited to `origins` and a per-client rate. */
    kind: z.enum(['server', 'browser']).default('server'),
    /** Browser keys: the exact origins whose pages may use the key (api/auth/browser-keys.ts). */
    origins: OriginListSchema.optional(),
    /** Browser keys: requests one client address may make per minute (default 30). */
    requestsPerMinute: z.number().int().min(1).max(10_000).optional(),
  })
  .strict()
  .superRefine((body, ctx) => {
    if (body.kind === 'browser' && body.origins === undefined) {
      ctx.addIssue({ code: 'custom', path: ['origins'], message: 'a browser key needs the exact origins of the pages that may use it' });
    }
    if (body.kind === 'server') {
      for (const field of ['origins', 'requestsPerMinute'] as const) {
        if (body[field] !== undefined) ctx.addIssue({ code: 'custom', path: [field], message: 'only browser keys (kind "browser") have this' });
      }
    }
  });

/** What a tenant admin may change on a browser key: its origins and per-client rate. */
export const UpdateBrowserKeyBody = z
  .object({ origins: OriginListSchema.optional(), requestsPerMinute: z.number().int().min(1).max(10_000).optional() })
  .strict()
  .refine((b) => b.origins !== undefined || b.requestsPerMinute !== undefined, { message: 'send origins, requestsPerMinute or both', path: ['origins'] });

type KeyRow = typeof credentials.$inferSelect;

function keyView(row: KeyRow, usedThisMonth: number) {
  const browser = row.origins !== null;
  return {
    id: row.id,
    label: row.label,
    kind: browser ? ('browser' as const) : ('server' as const),
    datasets: parseKeyScope(row.datasetScope),
    monthlyQuota: row.monthlyQuota,
    usedThisMonth,
    createdAt: row.createdAt,
    revokedAt: row.revokedAt,
    ...(browser
      ? { origins: parseOrigins(row.origins), requestsPerMinute: row.requestsPerMinute ?? DEFAULT_REQUESTS_PER_MINUTE, ...(row.revokedAt === null ? { secret: row.publicSecret } : {}) }
      : {}),
  };
}

/** API keys for apps: server keys (shown once, stored as a hash) and browser keys (public, origin-bound); scoped, revocable, with quotas. */
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
    // 256 random bits (api/auth/secrets.ts); a server key's secret is stored only as its SHA-256,
    // a browser key's also as it is (it is public: api/auth/browser-keys.ts).
    const secret = newSecret('query');
    const browser = body.kind === 'browser';
    const origins = browser ? [...new Set(body.origins!)] : null;
    const id = crypto.randomUUID();
    const insertKey = db
      .insert(credentials)
      .values({
        id,
        tenantId: c.var.tenantId,
        kind: 'query',
        secretHash: await hashSecret(secret),
        label: body.label,
        datasetScope: scope === null ? null : JSON.stringify(scope),
        monthlyQuota: body.monthlyQuota ?? null,
        origins: origins === null ? null : JSON.stringify(origins),
        requestsPerMinute: browser ? (body.requestsPerMinute ?? DEFAULT_REQUESTS_PER_MINUTE) : null,
        publicSecret: browser ? secret : null,
      })
      .returning();
    const [[row]] = origins === null ? [await insertKey] : await db.batch([insertKey, db.insert(keyOrigins).values(origins.map((origin) => ({ credentialId: id, origin })))]);
    await recordAudit(c, {
      action: 'key.create',
      target: `key ${row!.id}`,
      detail: { label: row!.label, kind: body.kind, datasets: scope, monthlyQuota: row!.monthlyQuota, ...(browser ? { origins, requestsPerMinute: row!.requestsPerMinute } : {}) },
    });
    const note = browser ? 'a browser key is public: it works only for pages of its origins, at its per-client rate' : 'the secret is shown once; store it now';
    return c.json({ ...keyView(row!, 0), secret, note }, 201);
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
  .patch('/keys/:id', limitBody(16 * 1024), async (c) => {
    const id = c.req.param('id');
    const body = await jsonBody(c.req.raw, UpdateBrowserKeyBody);
    const db = database(c.env);
    const [row] = await db.select().from(credentials).where(and(eq(credentials.id, id), eq(credentials.tenantId, c.var.tenantId), eq(credentials.kind, 'query')));
    if (!row) throw new ApiError(404, 'key_unknown', `API key ${id} does not exist for this tenant`, 'id');
    if (row.origins === null) throw new ApiError(409, 'key_not_browser', `API key ${id} is a server key: only browser keys have origins and a per-client rate`, 'id');
    if (row.revokedAt !== null) throw new ApiError(409, 'key_revoked', `API key ${id} was revoked at ${row.revokedAt}`, 'id');
    if (parseOrigins(row.origins).includes(SELF_ORIGIN)) {
      throw new ApiError(409, 'key_of_finder', `API key ${id} is a finder page's key: change its rate with PUT /v1/admin/datasets/:dataset/finder`, 'id');
    }
    const origins = body.origins === undefined ? parseOrigins(row.origins) : [...new Set(body.origins)];
    const requestsPerMinute = body.requestsPerMinute ?? row.requestsPerMinute;
    const mine = eq(credentials.id, id);
    const [[updated]] = await db.batch([
      db.update(credentials).set({ origins: JSON.stringify(origins), requestsPerMinute }).where(mine).returning(),
      db.delete(keyOrigins).where(eq(keyOrigins.credentialId, id)),
      db.insert(keyOrigins).values(origins.map((origin) => ({ credentialId: id, origin }))),
    ]);
    await recordAudit(c, { action: 'key.update', target: `key ${id}`, detail: { origins, requestsPerMinute } });
    const [used] = await db.select({ queries: keyMonths.queries }).from(keyMonths).where(and(eq(keyMonths.credentialId, id), eq(keyMonths.month, utcMonth(new Date()))));
    return c.json(keyView(updated!, used?.queries ?? 0));
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
