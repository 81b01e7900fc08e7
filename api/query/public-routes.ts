import { Hono } from 'hono';
import { cors } from 'hono/cors';
import type { Manifest } from '../../core/geo/manifest.ts';
import { ALLOWED_MODULUS_BITS } from '../../core/pir/params.ts';
import { answerWithPlan } from '../../core/pir/planned-answer.ts';
import { validateQuery } from '../../core/pir/validate.ts';
import { decodeQuery, encodeAnswer, queryByteLength } from '../../core/pir/wire.ts';
import { requireCredential } from '../auth/require-credential.ts';
import { database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { readLimitedBytes } from '../http/body-limit.ts';
import { pathSlug, pathVersion } from '../http/params.ts';
import { findDataset, findVersion, isAnswerable, type DatasetRow, type VersionRow } from '../datasets/repository.ts';
import { assertKeyScope } from '../auth/key-scope.ts';
import { secondsToNextMonth, utcMonth } from '../metering/calendar.ts';
import { countRejections } from '../metering/count-rejections.ts';
import { releaseQuotaSlot, takeQuotaSlot } from '../metering/quota.ts';
import { recordAnsweredQuery } from '../metering/record-usage.ts';
import { blobKeys } from '../storage/blobs.ts';
import { splitColumns } from '../../core/pir/fan-out.ts';
import { answerByParts } from './fanned-answer.ts';
import { answerPlanFor, loadManifest, loadMatrix } from './version-cache.ts';
import { productEngine } from './product-engine.ts';

/** About 10-15 s of plain BigInt products: above it, one answer is split over parts. */
const DEFAULT_PRODUCTS_PER_PART = 2_000_000;

export const publicRoutes = new Hono<AppBindings>()
  // Apps in browsers call these routes; Server-Timing must be readable by them.
  .use('/datasets/*', cors({ origin: '*', exposeHeaders: ['Server-Timing', 'X-Nearveil-Multiplications'], maxAge: 600 }))
  .use('/datasets/*', requireCredential('query'))
  .get('/datasets/:dataset/manifest', async (c) => {
    const db = database(c.env);
    const slug = pathSlug(c.req.param('dataset'), 'dataset');
    assertKeyScope(c.var.keyScope, slug);
    const dataset = await findDataset(db, c.var.tenantId, slug);
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
    const slug = pathSlug(c.req.param('dataset'), 'dataset');
    assertKeyScope(c.var.keyScope, slug);
    const dataset = await findDataset(db, c.var.tenantId, slug);
    const version = await servedVersion(db, dataset, pathVersion(c.req.param('version')));
    const manifest = await loadManifest(c.env, version.manifestKey!);
    const target = queriedMatrix(manifest, version, c.req.query('matrix'));
    const columns = target.columns;
    const largest = queryByteLength(Math.max(...ALLOWED_MODULUS_BITS), columns);
    // The exact size a query on this version can have, checked as the body streams in.
    const body = await readLimitedBytes(c.req.raw, largest);
    const started = performance.now();
    const { n, values } = decodeQuery(body);
    validateQuery(n, values, columns);
    // The quota slot is taken only for a well-formed query, and given back if no answer goes out.
    const now = new Date();
    const month = utcMonth(now);
    if (!(await takeQuotaSlot(db, c.var.credentialId, month, c.var.monthlyQuota))) {
      const retryAfter = secondsToNextMonth(now);
      throw new ApiError(429, 'quota_exceeded', `this API key has used its ${c.var.monthlyQuota} queries for ${month}; the quota renews in ${retryAfter} s (next UTC month)`, 'authorization', {
        'Retry-After': String(retryAfter),
      });
    }
    let answer: Uint8Array;
    let multiplications: number;
    let serverMs: number;
    try {
      const matrix = await loadMatrix(c.env, target.key);
      const perPart = Number(c.env.FANOUT_PRODUCTS_PER_PART ?? DEFAULT_PRODUCTS_PER_PART);
      const parts = splitColumns(columns, target.plan.products, perPart);
      const answered =
        parts.length > 1 && c.env.PARTS
          ? await answerByParts(matrix, target.key, n, values, parts, (request) => c.env.PARTS!.rowProducts(request))
          : // The plan the build chose for this matrix (recorded in its manifest).
            answerWithPlan(matrix, values, answerPlanFor(target.plan, target.contentHash, matrix), productEngine(n));
      multiplications = answered.products;
      answer = encodeAnswer((n.toString(2).length + 7) >> 3, answered.rows);
      serverMs = performance.now() - started;
      // Counted before the answer goes out: every answer a client receives is in the usage.
      await recordAnsweredQuery(db, {
        credentialId: c.var.credentialId,
        datasetId: dataset.id,
        version: version.number,
        bytesIn: body.length,
        bytesOut: answer.length,
        multiplications,
      }, now);
    } catch (err) {
      await releaseQuotaSlot(db, c.var.credentialId, month).catch((e: unknown) => console.error('nearveil: quota slot not released', e));
      throw err;
    }
    return c.body(answer.buffer as ArrayBuffer, 200, {
      'Content-Type': 'application/octet-stream',
      'Server-Timing': `answer;dur=${serverMs.toFixed(1)};desc="PIR answer"`,
      'X-Nearveil-Multiplications': String(multiplications),
      'Cache-Control': 'no-store',
    });
  });

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
    throw new ApiError(410, 'version_not_served', `version ${number} of "${dataset.slug}" is ${version.state} and answers no queries`, 'version');
  }
  return version;
}
