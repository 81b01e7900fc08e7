import { ManifestSchema, type Manifest, type PlanRecord } from '../../core/geo/manifest.ts';
import type { AnswerPlan } from '../../core/pir/answer-plan.ts';
import { mineMatrix, minedProducts, type MinedPlan } from '../../core/pir/mined-plan.ts';
import type { BitMatrix } from '../../core/matrix/bit-matrix.ts';
import { decodeMatrixBlob } from '../../core/matrix/matrix-blob.ts';
import type { Env } from '../env.ts';
import { getBlobBytes, getBlobText } from '../storage/blobs.ts';

/**
 * Manifests and matrices are immutable once built (keys carry the version or content hash), so
 * an isolate may keep the few it answers from. Bounded so a Worker's memory stays small.
 */
const MAX_MATRICES = 4;
const manifests = new Map<string, Manifest>();
const matrices = new Map<string, BitMatrix>();
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
  const hit = matrices.get(key);
  if (hit) {
    // Refresh recency: Map keeps insertion order, the first key is the least recently used.
    matrices.delete(key);
    matrices.set(key, hit);
    return hit;
  }
  const bytes = await getBlobBytes(env, key);
  if (bytes === null) throw new Error(`matrix blob ${key} is missing`);
  const matrix = decodeMatrixBlob(bytes);
  if (matrices.size >= MAX_MATRICES) matrices.delete(matrices.keys().next().value!);
  matrices.set(key, matrix);
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
    if (minedPlans.size >= MAX_MATRICES) minedPlans.delete(minedPlans.keys().next().value!);
    minedPlans.set(contentHash, mined);
  }
  return { kind: 'mined', mined };
}
