/**
 * The size limits of a site table, in one place. Every limit is checked by the site table parser
 * (site-table.ts) and reported with the row and column, like any other problem. Lengths count
 * Unicode code points (what a person calls characters), not UTF-16 units or bytes.
 *
 * The other limits stay beside the code they guard: MAX_SITES (site-table.ts, rows per table) and
 * MAX_RECORD_BYTES (core/details/record-codec.ts, 4,096 bytes of one site's encoded record).
 */

/** Ids are published in the manifest and sent to every client: short, like a code. */
export const MAX_ID_CHARS = 64;
/** A site's display name. */
export const MAX_NAME_CHARS = 200;
/** Columns in the header, id, lat, lon and name included. */
export const MAX_COLUMNS = 64;
/** A header cell: a column name, listed in the sealed file and shown as a label. */
export const MAX_COLUMN_NAME_CHARS = 100;
/**
 * Any other cell (lat, lon, a detail). Equal to MAX_RECORD_BYTES on purpose: a cell longer than
 * this could never fit a record (a character takes at least a byte), so the check refuses nothing
 * the record would hold, and it names the column where the record check names only the row. All
 * of a row's details together stay under the record's 4,096 bytes.
 */
export const MAX_CELL_CHARS = 4096;

/** The number of code points of `text`, counting only when the UTF-16 length could exceed `limit`. */
export function exceedsChars(text: string, limit: number): number | null {
  if (text.length <= limit) return null; // code points <= UTF-16 units
  let count = 0;
  for (const _ of text) count++;
  return count > limit ? count : null;
}
