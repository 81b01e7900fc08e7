import { InputError } from '../errors/input-error.ts';

/**
 * The sealed file of one version: every site's sealed record, in site index order.
 *   bytes 0-3    ASCII "NVS1" (format and version)
 *   bytes 4-7    record count, unsigned 32-bit big-endian
 *   bytes 8-11   sealed record length (padded record + 16-byte tag), unsigned 32-bit big-endian
 *   then count records of that length; site i's starts at 12 + i * length.
 * Every client downloads the whole file, so fetching it says nothing about which site it wants.
 */
const MAGIC = [0x4e, 0x56, 0x53, 0x31];
export const SEALED_HEADER_BYTES = 12;

export function sealedFileBytes(count: number, sealedRecordBytes: number): number {
  return SEALED_HEADER_BYTES + count * sealedRecordBytes;
}

/**
 * An empty sealed file of `count` records of `sealedRecordBytes`, its header written: the records
 * are set in place at sealedRecordAt (build-details.ts), so none is held twice.
 */
export function emptySealedFile(count: number, sealedRecordBytes: number): Uint8Array<ArrayBuffer> {
  if (!Number.isSafeInteger(count) || count < 1) throw new RangeError(`emptySealedFile: expected at least one record, got ${count}`);
  if (!Number.isSafeInteger(sealedRecordBytes) || sealedRecordBytes < 1) throw new RangeError(`emptySealedFile: expected a record length >= 1, got ${sealedRecordBytes}`);
  const out = new Uint8Array(sealedFileBytes(count, sealedRecordBytes));
  const view = new DataView(out.buffer);
  out.set(MAGIC, 0);
  view.setUint32(4, count);
  view.setUint32(8, sealedRecordBytes);
  return out;
}

/** Where site `index`'s sealed record starts in the file. */
export function sealedRecordAt(count: number, sealedRecordBytes: number, index: number): number {
  if (!Number.isSafeInteger(index) || index < 0 || index >= count) throw new RangeError(`sealedRecordAt: expected index in [0, ${count}), got ${index}`);
  return SEALED_HEADER_BYTES + index * sealedRecordBytes;
}

export interface SealedFile {
  count: number;
  sealedRecordBytes: number;
  /** Sealed record of site `index` (a view into the file). RangeError outside [0, count). */
  record(index: number): Uint8Array;
}

/** Reads the header and checks the length; InputError `sealed_format` on a malformed file. */
export function decodeSealedFile(bytes: Uint8Array): SealedFile {
  if (!(bytes instanceof Uint8Array) || bytes.length < SEALED_HEADER_BYTES || MAGIC.some((b, i) => bytes[i] !== b)) {
    throw new InputError('sealed_format', 'sealed', 'sealed file: expected header "NVS1"');
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const count = view.getUint32(4);
  const sealedRecordBytes = view.getUint32(8);
  const expected = sealedFileBytes(count, sealedRecordBytes);
  if (count < 1 || sealedRecordBytes < 1 || bytes.length !== expected) {
    throw new InputError('sealed_format', 'sealed', `sealed file: expected ${expected} bytes, got ${bytes.length}`);
  }
  return {
    count,
    sealedRecordBytes,
    record(index) {
      if (!Number.isSafeInteger(index) || index < 0 || index >= count) throw new RangeError(`sealed file: expected index in [0, ${count}), got ${index}`);
      const at = SEALED_HEADER_BYTES + index * sealedRecordBytes;
      return bytes.subarray(at, at + sealedRecordBytes);
    },
  };
}
