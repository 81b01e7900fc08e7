import { InputError, type InputIssue } from '../errors/input-error.ts';
import { MAX_LISTED_ISSUES, type Site, type SiteTable } from '../geo/site-table.ts';

/**
 * The plaintext of one site's private record (DETAILS.md, same folder): every column of its row.
 *   byte 0        record format, 1
 *   bytes 1-8     lat, IEEE 754 binary64, big-endian (the number the site table read, exactly)
 *   bytes 9-16    lon, the same
 *   then fields, each an unsigned LEB128 byte length and UTF-8 bytes: id; name (one presence
 *   byte first: 0 for none, 1 for a name); then every detail column's cell in column order.
 * A record is padded with zero bytes to the dataset's record length, so all sealed records have
 * one size and none shows its length.
 */
export interface SiteRecord {
  id: string;
  name: string | null;
  lat: number;
  lon: number;
  /** Every detail column, by column name, exactly as the site table holds the cell. */
  details: Record<string, string>;
}

export const RECORD_FORMAT = 1;
/** Largest encoded record (before padding): about 4,000 characters of text per site. */
export const MAX_RECORD_BYTES = 4096;
const HEADER_BYTES = 17;

const utf8 = new TextEncoder();

function pushLength(out: number[], length: number): void {
  let v = length;
  while (v >= 0x80) {
    out.push((v & 0x7f) | 0x80);
    v = Math.floor(v / 128);
  }
  out.push(v);
}

function pushText(out: number[], text: string): void {
  const bytes = utf8.encode(text);
  pushLength(out, bytes.length);
  for (const b of bytes) out.push(b);
}

/**
 * The unpadded record of `site`, its detail cells taken in `columns` order (a missing cell is
 * written as empty text). Throws TypeError for non-string cells.
 */
export function encodeRecord(site: Site, columns: readonly string[]): Uint8Array<ArrayBuffer> {
  const out: number[] = [RECORD_FORMAT];
  const head = new DataView(new ArrayBuffer(16));
  head.setFloat64(0, site.lat);
  head.setFloat64(8, site.lon);
  for (let i = 0; i < 16; i++) out.push(head.getUint8(i));
  pushText(out, site.id);
  if (site.name === null) out.push(0);
  else {
    out.push(1);
    pushText(out, site.name);
  }
  for (const column of columns) {
    const cell = Object.hasOwn(site.details, column) ? site.details[column] : '';
    if (typeof cell !== 'string') throw new TypeError(`encodeRecord: expected text in column "${column}", got ${typeof cell}`);
    pushText(out, cell);
  }
  return Uint8Array.from(out);
}

/**
 * Every site's unpadded record and the padded length (the longest). Throws InputError
 * `record_too_large` (413, field `file`) naming each row whose record exceeds MAX_RECORD_BYTES:
 * rows as in a spreadsheet when the table carries them (parseSiteTable does), else site indices.
 */
export function encodeAllRecords(table: SiteTable): { records: Uint8Array<ArrayBuffer>[]; recordBytes: number } {
  const records = table.sites.map((s) => encodeRecord(s, table.detailColumns));
  const issues: InputIssue[] = [];
  records.forEach((r, i) => {
    if (r.length > MAX_RECORD_BYTES) issues.push(recordTooLarge(table.rows?.[i], i, table.sites[i]!.id, r.length));
  });
  if (issues.length > 0) throw recordsTooLarge(issues);
  const recordBytes = records.reduce((max, r) => Math.max(max, r.length), HEADER_BYTES);
  return { records, recordBytes };
}

/** The issue of one record over MAX_RECORD_BYTES: its spreadsheet row when known, else its site index. */
export function recordTooLarge(row: number | undefined, index: number, id: string, length: number): InputIssue {
  const where = row === undefined ? `site index ${index}` : `row ${row}`;
  return {
    ...(row === undefined ? {} : { row }),
    message: `${where} (site "${id}"): its record is ${length} bytes, the limit is ${MAX_RECORD_BYTES} bytes of encoded text per site`,
  };
}

/** InputError `record_too_large` (413, field `file`) listing up to MAX_LISTED_ISSUES records. */
export function recordsTooLarge(issues: readonly InputIssue[]): InputError {
  const listed = issues.slice(0, MAX_LISTED_ISSUES);
  return new InputError(
    'record_too_large',
    'file',
    `details: expected every record to be at most ${MAX_RECORD_BYTES} bytes, got ${issues.length} larger (first: ${listed[0]!.message})`,
    { status: 413, details: listed },
  );
}

/** The shortest padded record length: the fixed header. */
export const RECORD_HEADER_BYTES = HEADER_BYTES;

/** `record` followed by zero bytes up to `length`. RangeError if it is longer. */
export function padRecord(record: Uint8Array, length: number): Uint8Array<ArrayBuffer> {
  if (record.length > length) throw new RangeError(`padRecord: expected at most ${length} bytes, got ${record.length}`);
  const out = new Uint8Array(length);
  out.set(record);
  return out;
}

/**
 * Reads a padded record back. Strict: the format byte, every length, the UTF-8 and the zero
 * padding are checked, and a RangeError names what is wrong rather than return a wrong record.
 */
export function decodeRecord(bytes: Uint8Array, columns: readonly string[]): SiteRecord {
  if (!(bytes instanceof Uint8Array) || bytes.length < HEADER_BYTES) {
    throw new RangeError(`decodeRecord: expected at least ${HEADER_BYTES} bytes, got ${bytes?.length}`);
  }
  if (bytes[0] !== RECORD_FORMAT) throw new RangeError(`decodeRecord: expected record format ${RECORD_FORMAT}, got ${bytes[0]}`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const text = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
  let at = HEADER_BYTES;
  const readLength = (): number => {
    let value = 0;
    for (let scale = 1; ; scale *= 128) {
      if (at >= bytes.length || scale > 2 ** 28) throw new RangeError(`decodeRecord: a field length runs past the record at byte ${at}`);
      const b = bytes[at++]!;
      value += (b & 0x7f) * scale;
      if (b < 0x80) return value;
    }
  };
  const readText = (what: string): string => {
    const length = readLength();
    if (at + length > bytes.length) throw new RangeError(`decodeRecord: ${what} runs past the record (${length} bytes at ${at})`);
    const value = text.decode(bytes.subarray(at, at + length));
    at += length;
    return value;
  };
  const id = readText('id');
  const hasName = bytes[at++];
  if (hasName !== 0 && hasName !== 1) throw new RangeError(`decodeRecord: expected a name marker 0 or 1, got ${hasName}`);
  const name = hasName === 1 ? readText('name') : null;
  // fromEntries defines own properties, so a column named "__proto__" stays a plain detail.
  const details: Record<string, string> = Object.fromEntries(columns.map((column) => [column, readText(`column "${column}"`)]));
  for (let i = at; i < bytes.length; i++) {
    if (bytes[i] !== 0) throw new RangeError(`decodeRecord: expected zero padding after byte ${at}, got ${bytes[i]} at ${i}`);
  }
  return { id, name, lat: view.getFloat64(1), lon: view.getFloat64(9), details };
}
