import { Hono } from 'hono';
import { browserPreflight } from '../auth/browser-keys.ts';
import type { Manifest } from '../../core/geo/manifest.ts';
import { assertKeyScope } from '../auth/key-scope.ts';
import { requireCredential } from '../auth/require-credential.ts';
import { database, type Database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { pathSlug, pathVersion } from '../http/params.ts';
import { findDataset, findVersion, isAnswerable, type DatasetRow, type VersionRow } from '../datasets/repository.ts';
import { countRejections } from '../metering/count-rejections.ts';
import { recordDownload } from '../metering/record-usage.ts';
import { blobKeys, getBlobStream } from '../storage/blobs.ts';
import { answerColumnQuery } from './answer-column.ts';
import { loadManifest } from './version-cache.ts';

export const publicRoutes = new Hono<AppBindings>()
  // Pages call these routes with browser keys only: preflights from unlisted origins are refused
  // (api/auth/browser-keys.ts), and the key's own origins are checked on the request.
  .use('/datasets/*', browserPreflight())
  .use('/datasets/*', requireCredential('query'))
  .get('/datasets/:dataset/manifest', async (c) => {
    const db = database(c.env);
    const dataset = await scopedDataset(c.var, db, c.req.param('dataset'));
    const requested = c.req.query('version');
    const number = requested === undefined ? activeVersionOf(dataset) : pathVersion(requested);
    const version = await servedVersion(db, dataset, number);
    const manifest = await loadManifest(c.env, version.manifestKey!);
    c.header('Cache-Control', 'private, max-age=60');
    c.header('ETag', `"${manifest.contentHash}"`);
    return c.json(manifest);
  })
  .post('/datasets/:dataset/versions/:version/query', countRejections(), async (c) => {
    const db = database(c.env);
    const dataset = await scopedDataset(c.var, db, c.req.param('dataset'));
    const version = await servedVersion(db, dataset, pathVersion(c.req.param('version')));
    const manifest = await loadManifest(c.env, version.manifestKey!);
    const target = queriedMatrix(manifest, version, c.req.query('matrix'));
    return answerColumnQuery(c, db, { datasetId: dataset.id, version: version.number }, {
      matrixKey: target.key,
      contentHash: target.contentHash,
      columns: target.columns,
      plan: target.plan,
      label: 'answer',
    });
  })
  // The details round (core/details/DETAILS.md): the same PIR query, on the matrix of record keys.
  .post('/datasets/:dataset/versions/:version/details/query', countRejections(), async (c) => {
    const db = database(c.env);
    const dataset = await scopedDataset(c.var, db, c.req.param('dataset'));
    const version = await servedVersion(db, dataset, pathVersion(c.req.param('version')));
    const details = detailsOf(await loadManifest(c.env, version.manifestKey!));
    return answerColumnQuery(c, db, { datasetId: dataset.id, version: version.number }, {
      matrixKey: blobKeys.matrix(details.matrix.contentHash),
      contentHash: details.matrix.contentHash,
      columns: details.matrix.columns,
      plan: details.matrix.plan,
      label: 'details',
    });
  })
  // Every sealed record of the version in one immutable file: every client downloads all of it,
  // so the download says nothing about which site it wants. Metered as bytes, no query.
  .get('/datasets/:dataset/versions/:version/details/sealed', async (c) => {
    const db = database(c.env);
    const dataset = await scopedDataset(c.var, db, c.req.param('dataset'));
    const version = await servedVersion(db, dataset, pathVersion(c.req.param('version')));
    const details = detailsOf(await loadManifest(c.env, version.manifestKey!));
    const etag = `"${details.sealedHash}"`;
    // The file never changes (its key is its SHA-256): a browser or the SDK keeps it.
    const caching = { ETag: etag, 'Cache-Control': 'private, max-age=31536000, immutable' };
    if (ifNoneMatch(c.req.header('if-none-match'), etag)) return c.body(null, 304, caching);
    const blob = await getBlobStream(c.env, blobKeys.sealed(details.sealedHash));
    if (blob === null) throw new Error(`sealed file ${details.sealedHash} is missing`);
    await recordDownload(db, { credentialId: c.var.credentialId, datasetId: dataset.id, version: version.number, bytesOut: blob.size });
    return c.body(blob.body, 200, { ...caching, 'Content-Type': 'application/octet-stream', 'Content-Length': String(blob.size) });
  });

async function scopedDataset(vars: AppBindings['Variables'], db: Database, raw: string | undefined): Promise<DatasetRow> {
  const slug = pathSlug(raw, 'dataset');
  assertKeyScope(vars.keyScope, slug);
  return findDataset(db, vars.tenantId, slug);
}

/** RFC 9110, 13.1.2: If-None-Match holds "*" or a list of entity tags (weak ones compare too). */
function ifNoneMatch(header: string | undefined, etag: string): boolean {
  if (!header) return false;
  return header.split(',').some((t) => {
    const tag = t.trim();
    return tag === '*' || tag === etag || tag === `W/${etag}`;
  });
}

function detailsOf(manifest: Manifest): NonNullable<Manifest['details']> {
  if (!manifest.details) {
    throw new ApiError(404, 'details_unavailable', `version ${manifest.version} of "${manifest.dataset}" was built without private details; build a new version to add them`, 'version');
  }
  return manifest.details;
}

/**
 * The matrix a query asks: `?matrix=cells` (the default: candidate lists) or `?matrix=partition`
 * (a veiled layout's coarse cell records, the first of its two private rounds). Both are bit
 * matrices answered, fanned out and metered alike.
 */
function queriedMatrix(manifest: Manifest, version: VersionRow, which: string | undefined) {
  if (which === undefined || which === 'cells') {
    return { key: version.matrixKey!, columns: manifest.matrix.columns, plan: manifest.matrix.plan, contentHash: manifest.contentHash };
  }
  if (which !== 'partition') throw new ApiError(400, 'invalid_matrix', `matrix: expected cells or partition, got "${which}"`, 'matrix');
  if (!manifest.partition) {
    throw new ApiError(400, 'no_partition_matrix', `matrix: version ${version.number} has a ${manifest.layout.kind} layout, which has no partition matrix`, 'matrix');
  }
  const p = manifest.partition;
  return { key: blobKeys.matrix(p.contentHash), columns: p.columns, plan: p.plan, contentHash: p.contentHash };
}

function activeVersionOf(dataset: DatasetRow): number {
  if (dataset.activeVersion === null) {
    throw new ApiError(404, 'no_active_version', `dataset "${dataset.slug}" has no published version yet`, 'dataset');
  }
  return dataset.activeVersion;
}

async function servedVersion(db: Parameters<typeof findVersion>[0], dataset: DatasetRow, number: number): Promise<VersionRow> {
  const version = await findVersion(db, dataset, number);
  if (!isAnswerable(version) || !version.manifestKey || !version.matrixKey) {
    // A "ready" version answers only during the grace after it was replaced: say which case it is.
    const why =
      version.state !== 'ready' ? `is ${version.state}` : version.servedUntil === null ? 'is built but was never published' : `was replaced and its grace period ended at ${version.servedUntil}`;
    throw new ApiError(410, 'version_not_served', `version ${number} of "${dataset.slug}" ${why}; it answers no queries`, 'version');
  }
  return version;
}
