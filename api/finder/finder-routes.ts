import { and, eq, isNull } from 'drizzle-orm';
import { Hono, type Context } from 'hono';
import { z } from 'zod';
import { MAX_K } from '../../core/geo/manifest.ts';
import { recordAudit } from '../audit/record-audit.ts';
import { OriginsSchema, parseOrigins, SELF_ORIGIN } from '../auth/browser-keys.ts';
import { requireRole } from '../auth/principal.ts';
import { hashSecret, newSecret } from '../auth/secrets.ts';
import { database, type Database } from '../db/client.ts';
import { credentials, datasets, keyOrigins, tenants, versions } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { findDataset, type DatasetRow } from '../datasets/repository.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody, pathSlug } from '../http/params.ts';
import { FinderSettings } from '../reference/response-schemas.ts';
import { renderFinderPage } from './finder-html.ts';

/**
 * The finder page: a public page at /find/TENANT/DATASET that finds the nearest sites privately in
 * the visitor's browser, for a dataset whose tenant admin switched it on. Switching it on makes a
 * browser key for that dataset alone, usable only by pages of this server's own origin (the
 * page calls the API from where it is served), at a per-client rate; switching it off revokes it.
 * Providers link to the page or embed it in a frame from the origins they list (CSP frame-ancestors).
 */

export const FinderSettingsBody = z
  .object({
    enabled: z.boolean(),
    /** Origins whose pages may show the finder in a frame (none: it opens only on its own). */
    frameOrigins: OriginsSchema.optional(),
    /** Sites shown, nearest first (default 3; never more than the active version was built for). */
    k: z.number().int().min(1).max(MAX_K).optional(),
    /** Searches one visitor address may start per minute (each search is about three requests). */
    requestsPerMinute: z.number().int().min(1).max(10_000).optional(),
  })
  .strict();

const DEFAULT_FINDER_K = 3;
/** A search is a manifest read and one or two queries; 30 a minute lets a person retry freely. */
const DEFAULT_FINDER_RATE = 30;

type FinderView = z.infer<typeof FinderSettings>;

const pagePath = (tenantSlug: string, dataset: string) => `/find/${encodeURIComponent(tenantSlug)}/${encodeURIComponent(dataset)}`;

async function finderView(c: Context<AppBindings>, db: Database, dataset: DatasetRow): Promise<FinderView> {
  const [tenant] = await db.select({ slug: tenants.slug }).from(tenants).where(eq(tenants.id, dataset.tenantId));
  const key = dataset.finderKeyId === null ? undefined : (await db.select().from(credentials).where(eq(credentials.id, dataset.finderKeyId)))[0];
  const url = new URL(pagePath(tenant!.slug, dataset.slug), c.req.url).toString();
  const enabled = key !== undefined && key.revokedAt === null;
  return {
    dataset: dataset.slug,
    enabled,
    url,
    frameOrigins: parseOrigins(dataset.finderFrameOrigins),
    k: dataset.finderK ?? DEFAULT_FINDER_K,
    requestsPerMinute: enabled ? key.requestsPerMinute : null,
    keyId: enabled ? key.id : null,
    embed: `<iframe src="${url}" title="Find the nearest: ${escapeAttribute(dataset.name)}" allow="geolocation" width="100%" height="640" style="border:0"></iframe>`,
  };
}

const admin = requireRole('tenant_admin');

export const finderSettingsRoutes = new Hono<AppBindings>()
  .use('/datasets/:dataset/finder', admin)
  .get('/datasets/:dataset/finder', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    return c.json(await finderView(c, db, dataset));
  })
  .put('/datasets/:dataset/finder', limitBody(16 * 1024), async (c) => {
    const body = await jsonBody(c.req.raw, FinderSettingsBody);
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const current = dataset.finderKeyId === null ? undefined : (await db.select().from(credentials).where(eq(credentials.id, dataset.finderKeyId)))[0];
    const live = current !== undefined && current.revokedAt === null ? current : undefined;
    const settings = {
      finderFrameOrigins: body.frameOrigins === undefined ? dataset.finderFrameOrigins : JSON.stringify([...new Set(body.frameOrigins)]),
      finderK: body.k ?? dataset.finderK,
    };
    let keyId = live?.id ?? null;
    if (!body.enabled) {
      if (live) await db.update(credentials).set({ revokedAt: new Date().toISOString() }).where(eq(credentials.id, live.id));
      keyId = null;
    } else if (live) {
      if (body.requestsPerMinute !== undefined) await db.update(credentials).set({ requestsPerMinute: body.requestsPerMinute }).where(eq(credentials.id, live.id));
    } else {
      keyId = crypto.randomUUID();
      const secret = newSecret('query');
      await db.batch([
        db.insert(credentials).values({
          id: keyId,
          tenantId: c.var.tenantId,
          kind: 'query',
          secretHash: await hashSecret(secret),
          label: `Finder page: ${dataset.slug}`,
          datasetScope: JSON.stringify([dataset.slug]),
          origins: JSON.stringify([SELF_ORIGIN]),
          requestsPerMinute: body.requestsPerMinute ?? DEFAULT_FINDER_RATE,
          publicSecret: secret,
        }),
        db.insert(keyOrigins).values({ credentialId: keyId, origin: SELF_ORIGIN }),
      ]);
    }
    const [updated] = await db
      .update(datasets)
      .set({ ...settings, finderKeyId: keyId })
      .where(eq(datasets.id, dataset.id))
      .returning();
    await recordAudit(c, { action: body.enabled ? 'finder.enable' : 'finder.disable', target: `dataset ${dataset.slug}`, detail: { frameOrigins: parseOrigins(settings.finderFrameOrigins), k: settings.finderK, keyId } });
    return c.json(await finderView(c, db, updated!));
  });

/** GET /find/:tenant/:dataset: the page itself, or a plain 404 page when it is off or unknown. */
export const finderPageRoutes = new Hono<AppBindings>().get('/find/:tenant/:dataset', async (c) => {
  const db = database(c.env);
  const [row] = await db
    .select({ dataset: datasets, key: credentials })
    .from(datasets)
    .innerJoin(tenants, eq(tenants.id, datasets.tenantId))
    .innerJoin(credentials, eq(credentials.id, datasets.finderKeyId))
    .where(and(eq(tenants.slug, c.req.param('tenant')), eq(datasets.slug, c.req.param('dataset')), isNull(datasets.deletedAt), isNull(credentials.revokedAt)))
    .limit(1);
  if (!row || row.dataset.activeVersion === null) {
    return c.html(unavailablePage(), 404, { 'Content-Security-Policy': "default-src 'none'", 'Cache-Control': 'no-store' });
  }
  const [active] = await db
    .select({ maxK: versions.buildMaxK })
    .from(versions)
    .where(and(eq(versions.datasetId, row.dataset.id), eq(versions.number, row.dataset.activeVersion)));
  const k = Math.min(row.dataset.finderK ?? DEFAULT_FINDER_K, active?.maxK ?? 1);
  const frames = parseOrigins(row.dataset.finderFrameOrigins);
  return c.html(renderFinderPage({ title: row.dataset.name, dataset: row.dataset.slug, apiKey: row.key.publicSecret!, k }), 200, {
    // Nothing from other hosts; the page talks only to this server; framed only by listed origins.
    'Content-Security-Policy': `default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; base-uri 'none'; form-action 'none'; frame-ancestors 'self'${frames.map((o) => ` ${o}`).join('')}`,
    'Permissions-Policy': 'geolocation=(self)',
    'Referrer-Policy': 'no-referrer',
    'X-Content-Type-Options': 'nosniff',
    'Cache-Control': 'no-store',
  });
});

function unavailablePage(): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>Finder page not available</title></head><body><main><h1>This finder page is not available</h1><p>The list it belongs to does not exist, or its provider has not switched the page on. Ask the provider for the right link.</p></main></body></html>`;
}

function escapeAttribute(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}
