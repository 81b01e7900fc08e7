import { buildVersion } from '../../core/build/build-version.ts';
import type { LayoutChoice } from '../../core/build/choose-layout.ts';
import type { Manifest } from '../../core/geo/manifest.ts';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { hex } from '../auth/secrets.ts';
import type { Database } from '../db/client.ts';
import type { Env } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { blobKeys, getBlobText, putBlob } from '../storage/blobs.ts';
import { versionDetailsSecret } from './details-secret.ts';
import { moveVersionState, type DatasetRow, type VersionRow } from './repository.ts';

/**
 * Turns a draft version into a stored cell matrix, details matrix, sealed file and manifest.
 * Blobs are written first (content-addressed, then the manifest); only then does the row say
 * "ready". A failure
 * marks the version "failed" with its reason and never touches the active version.
 */
export async function runBuild(env: Env, db: Database, dataset: DatasetRow, version: VersionRow, layout: LayoutChoice = 'auto', maxK = 1): Promise<Manifest> {
  if (!(await moveVersionState(db, version, ['draft', 'failed'], 'building', { error: null }))) {
    throw new ApiError(409, 'version_state', `version ${version.number} is ${version.state}; only a draft or failed version can be built`, 'version');
  }
  try {
    const csv = await getBlobText(env, version.tableKey);
    if (csv === null) throw new Error(`site table blob ${version.tableKey} is missing`);
    const detailsSecret = await versionDetailsSecret(db, version);
    const built = await buildVersion(parseSiteTable(csv), { dataset: dataset.slug, version: version.number, layout, maxK, detailsSecret });
    const matrixKey = blobKeys.matrix(built.manifest.contentHash);
    const manifestKey = blobKeys.manifest(dataset.id, version.number);
    await putBlob(env, matrixKey, built.matrixBlob);
    const details = built.manifest.details;
    if (built.details && details) {
      await putBlob(env, blobKeys.matrix(details.matrix.contentHash), built.details.matrixBlob);
      await putBlob(env, blobKeys.sealed(details.sealedHash), built.details.sealedFile);
    }
    // A veiled layout's partition matrix: content-addressed like the cell matrix; the manifest names its hash.
    if (built.partition && built.manifest.partition) await putBlob(env, blobKeys.matrix(built.manifest.partition.contentHash), built.partition.blob);
    await putBlob(env, manifestKey, JSON.stringify(built.manifest));
    await moveVersionState(db, { ...version, state: 'building' }, ['building'], 'ready', {
      matrixKey,
      manifestKey,
      contentHash: built.manifest.contentHash,
      builtAt: new Date().toISOString(),
    });
    return built.manifest;
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    await moveVersionState(db, { ...version, state: 'building' }, ['building'], 'failed', { error: reason.slice(0, 500) });
    if (err instanceof ApiError) throw err;
    console.error('nearveil: build failed', dataset.slug, version.number, err);
    throw new ApiError(422, 'build_failed', `build of version ${version.number} failed: ${reason}`, 'version');
  }
}

export async function sha256Hex(bytes: Uint8Array<ArrayBuffer>): Promise<string> {
  return hex(new Uint8Array(await crypto.subtle.digest('SHA-256', bytes)));
}
