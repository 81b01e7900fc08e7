import { Hono } from 'hono';
import { requireRole } from '../auth/principal.ts';
import { database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { pathSlug, pathVersion } from '../http/params.ts';
import { getBlobBytes, getBlobText } from '../storage/blobs.ts';
import { findDataset, findVersion } from './repository.ts';

/**
 * What the console reads back of a stored version: the site table exactly as uploaded (for
 * diffs, export and the map) and, once built, its manifest. Both are immutable per version,
 * so a client may cache them.
 */
export const versionTableRoutes = new Hono<AppBindings>()
  .use('/datasets/*', requireRole('tenant_editor'))
  .get('/datasets/:dataset/versions/:version/table', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const version = await findVersion(db, dataset, pathVersion(c.req.param('version')));
    const bytes = await getBlobBytes(c.env, version.tableKey);
    if (!bytes) throw new ApiError(410, 'table_gone', `the site table of version ${version.number} is no longer stored`, 'version');
    return c.body(bytes as Uint8Array<ArrayBuffer>, 200, {
      'content-type': 'text/csv; charset=utf-8',
      'content-disposition': `attachment; filename="${dataset.slug}-v${version.number}.csv"`,
      'cache-control': 'private, max-age=3600, immutable',
    });
  })
  .get('/datasets/:dataset/versions/:version/manifest', async (c) => {
    const db = database(c.env);
    const dataset = await findDataset(db, c.var.tenantId, pathSlug(c.req.param('dataset'), 'dataset'));
    const version = await findVersion(db, dataset, pathVersion(c.req.param('version')));
    if (!version.manifestKey) {
      throw new ApiError(409, 'version_state', `version ${version.number} is ${version.state}; a manifest exists once it is built`, 'version');
    }
    const text = await getBlobText(c.env, version.manifestKey);
    if (text === null) throw new ApiError(410, 'manifest_gone', `the manifest of version ${version.number} is no longer stored`, 'version');
    return c.body(text, 200, { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'private, max-age=3600, immutable' });
  });
