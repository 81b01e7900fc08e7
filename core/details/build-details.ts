import { sha256Hex } from '../build/sha256-hex.ts';
import type { SiteTable } from '../geo/site-table.ts';
import type { BitMatrix } from '../matrix/bit-matrix.ts';
import { encodeMatrixBlob } from '../matrix/matrix-blob.ts';
import { choosePlan, type PlanChoice } from '../pir/answer-plan.ts';
import { chooseKeysPerColumn, fillKeyMatrix } from './key-matrix.ts';
import { encodeAllRecords, padRecord } from './record-codec.ts';
import { deriveRecordKey, GCM_TAG_BYTES, importDetailsSecret, sealRecord } from './seal.ts';
import { encodeSealedFile } from './sealed-file.ts';

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
const BATCH = 512;

/**
 * Seals every site's record and lays out the record keys as the details matrix. Deterministic
 * for a given table and secret (see seal.ts). The matrix is answered with the best plain or
 * blocked plan: keys are pseudorandom, so mined column sets would only find chance overlaps.
 * Throws InputError `record_too_large` naming the rows over the limit (record-codec.ts).
 */
export async function buildDetails(table: SiteTable, secret: Uint8Array): Promise<BuiltDetails> {
  const { records, recordBytes } = encodeAllRecords(table);
  const hmac = await importDetailsSecret(secret);
  const keys: Uint8Array[] = new Array(records.length);
  const sealed: Uint8Array[] = new Array(records.length);
  for (let start = 0; start < records.length; start += BATCH) {
    const end = Math.min(records.length, start + BATCH);
    const jobs: Promise<void>[] = [];
    for (let i = start; i < end; i++) {
      jobs.push(
        (async () => {
          const padded = padRecord(records[i]!, recordBytes);
          keys[i] = await deriveRecordKey(hmac, i, padded);
          sealed[i] = await sealRecord(keys[i]!, i, padded);
        })(),
      );
    }
    await Promise.all(jobs);
  }
  const sealedFile = encodeSealedFile(sealed);
  const keysPerColumn = chooseKeysPerColumn(records.length);
  const matrix = fillKeyMatrix(keys, keysPerColumn);
  const matrixBlob = encodeMatrixBlob(matrix);
  return {
    columns: [...table.detailColumns],
    recordBytes,
    sealedRecordBytes: recordBytes + GCM_TAG_BYTES,
    keysPerColumn,
    sealedFile,
    sealedHash: await sha256Hex(sealedFile),
    matrix,
    matrixBlob,
    matrixHash: await sha256Hex(matrixBlob),
    plan: choosePlan(matrix, { mined: false }),
  };
}
