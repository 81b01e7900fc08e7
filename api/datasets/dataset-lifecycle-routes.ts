import { and, eq, isNull } from 'drizzle-orm';
import { Hono } from 'hono';
import { z } from 'zod';
import { recordAudit } from '../audit/record-audit.ts';
import { requireRole } from '../auth/principal.ts';
import { database } from '../db/client.ts';
import { datasets } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { pathSlug } from '../http/params.ts';
import { DatasetNameSchema } from './dataset-name.ts';
import { deletedDataset, findDataset, findDatasetWithHistory, type DatasetRow } from './repository.ts';
import { sweepQuietly } from './retire-versions.ts';
import { datasetView } from './views.ts';

export const RenameDatasetBody = z.object({ name: DatasetNameSchema }).strict();
export const DeleteDatasetBody = z.object({ confirm: z.string().max(100).optional().describe("the dataset's slug again: needed while it has an active version") }).strict();

/**
 * Rename (editors too: only the name people read changes) and delete (tenant admins). A delete
 * hides the dataset and stops its answers at once; the row stays so usage and statements keep
 * their history, its slug is never reused, and the sweep collects its blobs later.
 */
export const datasetLifecycleRoutes = new Hono<AppBindings>()
  .patch('/datasets/:dataset', requireRole('tenant_editor'), limitBody(4096), async (c) => {
    const slug = pathSlug(c.req.param('dataset'), 'dataset');
    const raw = readJson(await c.req.text(), true);
    if (typeof raw === 'object' && raw !== null && 'slug' in raw) {
      throw new ApiError(400, 'slug_fixed', `slug: a dataset's slug never changes (apps use "${slug}" in their URLs); send only the new name`, 'slug');
    }
    const body = RenameDatasetBody.parse(raw);
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, slug);
    const [updated] = await db
      .update(datasets)
      .set({ name: body.name })
      .where(and(eq(datasets.id, dataset.id), isNull(datasets.deletedAt)))
      .returning();
    if (!updated) throw deletedDataset(await findDatasetWithHistory(db, c.var.tenantId, slug));
    if (updated.name !== dataset.name) {
      await recordAudit(c, { action: 'dataset.rename', target: `dataset ${slug}`, detail: { from: dataset.name, to: updated.name } });
    }
    return c.json(datasetView(updated));
  })
  .delete('/datasets/:dataset', requireRole('tenant_admin'), limitBody(4096), async (c) => {
    const slug = pathSlug(c.req.param('dataset'), 'dataset');
    const body = DeleteDatasetBody.parse(readJson(await c.req.text(), false));
    if (body.confirm !== undefined && body.confirm !== slug) {
      throw new ApiError(400, 'confirmation_mismatch', `confirm: expected the slug of the dataset to delete, "${slug}", got "${body.confirm}"`, 'confirm');
    }
    const confirmed = body.confirm === slug;
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, slug);
    if (!confirmed && dataset.activeVersion !== null) throw confirmationRequired(dataset);
    const deletedAt = new Date().toISOString();
    // Unconfirmed, the delete holds only while nothing is active: a publish meanwhile stops it.
    const [deleted] = await db
      .update(datasets)
      .set({ deletedAt })
      .where(and(eq(datasets.id, dataset.id), isNull(datasets.deletedAt), confirmed ? undefined : isNull(datasets.activeVersion)))
      .returning();
    if (!deleted) {
      const now = await findDatasetWithHistory(db, c.var.tenantId, slug);
      throw now.deletedAt !== null ? deletedDataset(now) : confirmationRequired(now);
    }
    await recordAudit(c, { action: 'dataset.delete', target: `dataset ${slug}`, detail: { name: deleted.name, activeVersion: deleted.activeVersion, confirmed } });
    c.executionCtx.waitUntil(sweepQuietly(c.env));
    return c.json({ dataset: slug, name: deleted.name, deletedAt, activeVersion: deleted.activeVersion });
  });

function confirmationRequired(dataset: DatasetRow): ApiError {
  return new ApiError(
    409,
    'confirmation_required',
    `confirm: dataset "${dataset.slug}" has an active version (v${dataset.activeVersion}) that apps may be using; to delete it anyway, send {"confirm": "${dataset.slug}"}`,
    'confirm',
  );
}

/** The JSON body; an empty one is `{}` unless `required`. Not JSON: 400 naming "body". */
function readJson(text: string, required: boolean): unknown {
  if (text.trim() === '' && !required) return {};
  try {
    return JSON.parse(text);
  } catch {
    throw new ApiError(400, 'invalid_json', 'body: expected a JSON object', 'body');
  }
}
