import { and, eq, isNull } from 'drizzle-orm';
import { Hono } from 'hono';
import { z } from 'zod';
import { MAX_K } from '../../core/geo/manifest.ts';
import { LAYOUT_CHOICES, type LayoutChoice } from '../../core/build/choose-layout.ts';
import { recordAudit } from '../audit/record-audit.ts';
import { requireRole } from '../auth/principal.ts';
import { database } from '../db/client.ts';
import { datasets } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody, readLimitedBytes } from '../http/body-limit.ts';
import { jsonBody, pathSlug, pathVersion, SlugSchema } from '../http/params.ts';
import { blobKeys, getBlobText, putBlob } from '../storage/blobs.ts';
import { checkBuildRequest } from '../../core/build/build-version.ts';
import { siteColumnSteps } from '../../core/build/site-columns.ts';
import { decodeUtf8File } from '../../core/text/utf8-file.ts';
import { runStepsPaused } from '../../core/steps/steps.ts';
import { isolatePause } from '../builds/isolate-pause.ts';
import { findDataset, findDatasetWithHistory, findVersion, insertDraftVersion, listVersions } from './repository.ts';
import { datasetView, versionView } from './views.ts';
import { DatasetNameSchema } from './dataset-name.ts';
import { queueBuild, resumeIfSilent } from '../builds/queue-build.ts';
import { sha256Hex } from '../builds/run-build.ts';
import { activateVersion, graceSeconds, rollbackTarget } from './activate-version.ts';
import { sweepQuietly } from './retire-versions.ts';

/**
 * Largest site table upload: 200,000 rows of up to 160 bytes. The bytes, their text and the
 * columns read from them must fit one isolate's 128 MB together (Cloudflare Workers limits).
 */
export const MAX_SITE_TABLE_BYTES = 32 * 1024 * 1024;

export const CreateDatasetBody = z.object({ slug: SlugSchema, name: DatasetNameSchema.optional() }).strict();

/** Editors create datasets, upload and build; publishing is for tenant admins (and the operator). */
const editor = requireRole('tenant_editor');

export const adminDatasetRoutes = new Hono<AppBindings>()
  .use('/datasets', editor)
  .use('/datasets/*', editor)
  .post('/datasets', limitBody(16 * 1024), async (c) => {
    const body = await jsonBody(c.req.raw, CreateDatasetBody);
    const db = database(c.env);
    const inserted = await db
      .insert(datasets)
      .values({ id: crypto.randomUUID(), tenantId: c.var.tenantId, slug: body.slug, name: body.name ?? body.slug })
      .onConflictDoNothing()
      .returning();
    if (inserted.length === 0) {
      // A deleted dataset keeps its slug: apps and API keys that named it never reach other data.
      const existing = await findDatasetWithHistory(db, c.var.tenantId, body.slug);
      if (existing.deletedAt !== null) {
        throw new ApiError(409, 'slug_retired', `slug: "${body.slug}" belonged to a dataset deleted on ${existing.deletedAt.slice(0, 10)}; a slug is never given to another dataset (apps and API keys may still name it), so choose another`, 'slug');
      }
      throw new ApiError(409, 'dataset_exists', `dataset "${body.slug}" already exists`, 'slug');
    }
    await recordAudit(c, { action: 'dataset.create', target: `dataset ${body.slug}`, detail: { name: inserted[0]!.name } });
    return c.json(datasetView(inserted[0]!), 201);
  })
  .get('/datasets', async (c) => {
    const rows = await database(c.env).select().from(datasets).where(and(eq(datasets.tenantId, c.var.tenantId), isNull(datasets.deletedAt)));
    return c.json({ datasets: rows.map(datasetView) });
  })
  .get('/datasets/:dataset/versions', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const rows = await listVersions(db, dataset.id);
    // A build whose Worker died is queued again when someone looks (see resumeIfSilent).
    for (const row of rows) await resumeIfSilent(c.env, db, row);
    return c.json({ dataset: dataset.slug, activeVersion: dataset.activeVersion, versions: (await listVersions(db, dataset.id)).map(versionView) });
  })
  .post('/datasets/:dataset/versions', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const type = c.req.header('content-type') ?? '';
    if (!/^text\/csv\b/i.test(type)) {
      throw new ApiError(415, 'content_type', `body: expected Content-Type text/csv, got "${type || 'none'}"`, 'content-type');
    }
    const bytes = await readLimitedBytes(c.req.raw, MAX_SITE_TABLE_BYTES);
    // Text that is not UTF-8 is refused (naming line and byte), never decoded with replacements.
    // Read into columns as a build would (a large table fits the isolate); records over the
    // details size limit are refused now, naming their rows, not at build time.
    const sites = await runStepsPaused(siteColumnSteps(decodeUtf8File(bytes)), isolatePause());
    const tableKey = blobKeys.table(await sha256Hex(bytes));
    await putBlob(c.env, tableKey, bytes);
    const number = await insertDraftVersion(db, dataset.id, sites.ids.length, tableKey, c.var.principal.label);
    await recordAudit(c, { action: 'version.upload', target: `dataset ${dataset.slug} v${number}`, detail: { sites: sites.ids.length, bytes: bytes.length, tableKey } });
    return c.json(versionView(await findVersion(db, dataset, number)), 201);
  })
  .get('/datasets/:dataset/versions/:version', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const version = await findVersion(db, dataset, pathVersion(c.req.param('version')));
    if (await resumeIfSilent(c.env, db, version)) return c.json(versionView(await findVersion(db, dataset, version.number)));
    return c.json(versionView(version));
  })
  .post('/datasets/:dataset/versions/:version/build', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const version = await findVersion(db, dataset, pathVersion(c.req.param('version')));
    const layout = c.req.query('layout') ?? 'auto';
    if (!isLayoutChoice(layout)) {
      throw new ApiError(400, 'invalid_layout', `layout: expected ${LAYOUT_CHOICES.join(', ')}, got "${layout}"`, 'layout');
    }
    const maxK = buildMaxK(c.req.query('maxK'));
    if (layout === 'veiled' && maxK > 1) throw new ApiError(400, 'invalid_max_k', `maxK: the veiled layout serves the nearest site only (maxK 1), got ${maxK}`, 'maxK');
    // A named layout that cannot fit is refused now, with advice, not after minutes in the queue.
    if (layout === 'grid') {
      const csv = await getBlobText(c.env, version.tableKey);
      if (csv === null) throw new ApiError(410, 'table_gone', `the site table of version ${version.number} is no longer kept`, 'version');
      checkBuildRequest(await runStepsPaused(siteColumnSteps(csv), isolatePause()), layout, maxK);
    }
    await queueBuild(c.env, db, dataset, version, layout, maxK);
    await recordAudit(c, { action: 'version.build', target: `dataset ${dataset.slug} v${version.number}`, detail: { layout, maxK, queued: true } });
    return c.json(versionView(await findVersion(db, dataset, version.number)), 202);
  })
  .post('/datasets/:dataset/versions/:version/publish', requireRole('tenant_admin'), async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const version = await findVersion(db, dataset, pathVersion(c.req.param('version')));
    const switched = await activateVersion(c.env, db, dataset, version);
    await recordAudit(c, { action: 'version.publish', target: `dataset ${dataset.slug} v${version.number}`, detail: { previousVersion: dataset.activeVersion } });
    c.executionCtx.waitUntil(sweepQuietly(c.env));
    return c.json({ dataset: dataset.slug, ...switched, graceSeconds: graceSeconds(c.env) });
  })
  .post('/datasets/:dataset/rollback', requireRole('tenant_admin'), limitBody(4096), async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const text = await c.req.text();
    const body = RollbackBody.parse(text.trim() === '' ? {} : parseJson(text));
    const target = body.toVersion === undefined ? rollbackTarget(dataset, await listVersions(db, dataset.id)) : await findVersion(db, dataset, body.toVersion);
    if (target.number === dataset.activeVersion) throw new ApiError(409, 'version_active', `version ${target.number} is already active`, 'toVersion');
    const switched = await activateVersion(c.env, db, dataset, target);
    await recordAudit(c, { action: 'version.rollback', target: `dataset ${dataset.slug} v${target.number}`, detail: { previousVersion: dataset.activeVersion } });
    c.executionCtx.waitUntil(sweepQuietly(c.env));
    return c.json({ dataset: dataset.slug, ...switched, graceSeconds: graceSeconds(c.env) });
  });

const RollbackBody = z.object({ toVersion: z.number().int().min(1).optional() }).strict();

function parseJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    throw new ApiError(400, 'invalid_json', 'body: expected a JSON object', 'body');
  }
}

/** The build's `maxK` query parameter: k nearest served, a whole number 1..MAX_K (default 1). */
function buildMaxK(value: string | undefined): number {
  if (value === undefined) return 1;
  const n = Number(value);
  if (!/^\d+$/.test(value) || n < 1 || n > MAX_K) throw new ApiError(400, 'invalid_max_k', `maxK: expected a whole number from 1 to ${MAX_K}, got "${value}"`, 'maxK');
  return n;
}
const isLayoutChoice = (value: string): value is LayoutChoice => (LAYOUT_CHOICES as readonly string[]).includes(value);
