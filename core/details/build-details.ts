import { sha256Hex } from '../build/sha256-hex.ts';
import { recordAt, type SiteColumns } from '../build/site-columns.ts';
import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { encodeMatrixBlob } from '../matrix/matrix-blob.ts';
import { choosePlanSteps, type PlanChoice } from '../pir/answer-plan.ts';
import { runStepsPaused } from '../steps/steps.ts';
import { chooseKeysPerColumn, fillKeyMatrix } from './key-matrix.ts';
import { padRecord } from './record-codec.ts';
import { deriveRecordKey, GCM_TAG_BYTES, importDetailsSecret, RECORD_KEY_BYTES, sealRecord } from './seal.ts';
import { emptySealedFile, sealedRecordAt } from './sealed-file.ts';

export interface BuiltDetails {
  /** Detail column names, in record order. */
  columns: string[];
  recordBytes: number;
  sealedRecordBytes: number;
  keysPerColumn: number;
  sealedFile: Uint8Array<ArrayBuffer>;
  sealedHash: string;
  matrix: BitMatrix;
  matrixBlob: Uint8Array<ArrayBuffer>;
  matrixHash: string;
  plan: PlanChoice;
}

/** Records sealed at once: enough to keep WebCrypto busy, few enough to bound memory. */
const BATCH = 128;

/**
 * Seals every site's record and lays out the record keys as the details matrix. Deterministic
 * for a given table and secret (see seal.ts). The matrix is answered with the best plain or
 * blocked plan: keys are pseudorandom, so mined column sets would only find chance overlaps.
 * Throws InputError `record_too_large` naming the rows over the limit (record-codec.ts).
 * `checkpoint` is awaited after every batch of BATCH records, with the share sealed.
 */
export async function buildDetails(sites: SiteColumns, secret: Uint8Array, checkpoint?: (share: number) => void | Promise<void>): Promise<BuiltDetails> {
  const count = sites.ids.length;
  const recordBytes = sites.records.longest;
  const hmac = await importDetailsSecret(secret);
  const keys = new Uint8Array(count * RECORD_KEY_BYTES);
  const sealedRecordBytes = recordBytes + GCM_TAG_BYTES;
  // Sealed records go straight into the file's buffer: no array of 100,000 small ones on the heap.
  const sealedFile = emptySealedFile(count, sealedRecordBytes);
  for (let start = 0; start < count; start += BATCH) {
    const end = Math.min(count, start + BATCH);
    const jobs: Promise<void>[] = [];
    for (let i = start; i < end; i++) {
      jobs.push(
        (async () => {
          const padded = padRecord(recordAt(sites, i), recordBytes);
          const key = await deriveRecordKey(hmac, i, padded);
          keys.set(key, i * RECORD_KEY_BYTES);
          sealedFile.set(await sealRecord(key, i, padded), sealedRecordAt(count, sealedRecordBytes, i));
        })(),
      );
    }
    await Promise.all(jobs);
    // WebCrypto answers at once in a Worker: without this, sealing would hold the thread throughout.
    await checkpoint?.(end / count);
  }
  const keysPerColumn = chooseKeysPerColumn(count);
  const matrix = fillKeyMatrix(keys, keysPerColumn);
  const matrixBlob = encodeMatrixBlob(matrix);
  return {
    columns: [...sites.detailColumns],
    recordBytes,
    sealedRecordBytes,
    keysPerColumn,
    sealedFile,
    sealedHash: await sha256Hex(sealedFile),
    matrix,
    matrixBlob,
    matrixHash: await sha256Hex(matrixBlob),
    plan: await runStepsPaused(choosePlanSteps(matrix, { mined: false }), () => checkpoint?.(1)),
  };
}
