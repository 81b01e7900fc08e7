import { ManifestSchema, type Manifest, type PlanRecord } from '../../core/geo/manifest.ts';
import type { AnswerPlan } from '../../core/pir/answer-plan.ts';
import { mineMatrix, minedProducts, type MinedPlan } from '../../core/pir/mined-plan.ts';
import type { BitMatrix } from '../../core/matrix/bit-matrix.ts';
import { decodeMatrixBlob } from '../../core/matrix/matrix-blob.ts';
import type { Env } from '../env.ts';
import { getBlobBytes, getBlobText } from '../storage/blobs.ts';
import { ByteBoundedCache } from './byte-bounded-cache.ts';

/**
 * Manifests and matrices are immutable once built (keys carry the version or content hash), so
 * an isolate may keep the few it answers from. Matrices and the parts' column slices share one
 * byte budget: with one answer's working memory (at most ANSWER_MEMORY_BUDGET_BYTES, checked at
 * build) the isolate stays under the 128 MB a Worker may use.
 */
export const MATRIX_CACHE_BYTES = 32 * 2 ** 20;
const MAX_MINED_PLANS = 4;
const manifests = new Map<string, Manifest>();
export const matrixCache = new ByteBoundedCache<{ matrix: BitMatrix; plan?: AnswerPlan }>(MATRIX_CACHE_BYTES, (e) => e.matrix.words.byteLength);
const minedPlans = new Map<string, MinedPlan>();

export async function loadManifest(env: Env, key: string): Promise<Manifest> {
  const hit = manifests.get(key);
  if (hit) return hit;
  const text = await getBlobText(env, key);
  if (text === null) throw new Error(`manifest blob ${key} is missing`);
  const manifest = ManifestSchema.parse(JSON.parse(text));
  if (manifests.size >= 64) manifests.delete(manifests.keys().next().value!);
  manifests.set(key, manifest);
  return manifest;
}

export async function loadMatrix(env: Env, key: string): Promise<BitMatrix> {
  const hit = matrixCache.get(key);
  if (hit) return hit.matrix;
  const bytes = await getBlobBytes(env, key);
  if (bytes === null) throw new Error(`matrix blob ${key} is missing`);
  const matrix = decodeMatrixBlob(bytes);
  matrixCache.set(key, { matrix });
  return matrix;
}

/**
 * The answer plan the build recorded for the matrix with this content hash (the cell matrix, or a
 * veiled layout's partition matrix). A mined plan is mined again from the matrix (deterministic)
 * once per isolate and checked against the product count the build recorded.
 */
export function answerPlanFor(record: PlanRecord, contentHash: string, matrix: BitMatrix): AnswerPlan {
  if (record.kind === 'plain') return { kind: 'plain' };
  if (record.kind === 'blocked') return { kind: 'blocked', blockColumns: record.blockColumns };
  let mined = minedPlans.get(contentHash);
  if (!mined) {
    mined = mineMatrix(matrix);
    if (minedProducts(mined) !== record.products) {
      throw new Error(`mined plan of ${contentHash} costs ${minedProducts(mined)} products, the build recorded ${record.products}`);
    }
    if (minedPlans.size >= MAX_MINED_PLANS) minedPlans.delete(minedPlans.keys().next().value!);
    minedPlans.set(contentHash, mined);
  }
  return { kind: 'mined', mined };
}
