import type { Details } from '../geo/manifest.ts';
import { keyFromBits, keyLocation, type KeyLocation } from './key-matrix.ts';
import { decodeRecord, type SiteRecord } from './record-codec.ts';
import { unsealRecord } from './seal.ts';
import type { SealedFile } from './sealed-file.ts';

/**
 * Client side of the details round. The details query asks for `where.column` of the details
 * matrix (hidden in a PIR query like the locate round's); the client decodes only the 128 rows
 * from `where.rowStart` and opens the site's sealed record with the key they spell.
 */
export function detailsKeyLocation(details: Details, siteCount: number, index: number): KeyLocation {
  if (!Number.isSafeInteger(index) || index < 0 || index >= siteCount) {
    throw new RangeError(`detailsKeyLocation: expected a site index in [0, ${siteCount}), got ${index}`);
  }
  return keyLocation(index, details.keysPerColumn);
}

/**
 * Opens site `index`'s record from the sealed file with its key's decoded bits. Throws
 * InputError `record_refused` when the tag fails (a changed record or a wrong key) and
 * RangeError when the file does not match the manifest, never returning a wrong record.
 */
export async function openRecord(details: Details, sealed: SealedFile, index: number, keyBits: Uint8Array): Promise<SiteRecord> {
  if (sealed.sealedRecordBytes !== details.sealedRecordBytes) {
    throw new RangeError(`openRecord: expected sealed records of ${details.sealedRecordBytes} bytes, got ${sealed.sealedRecordBytes}`);
  }
  const plaintext = await unsealRecord(keyFromBits(keyBits), index, sealed.record(index));
  return decodeRecord(plaintext, details.columns);
}
