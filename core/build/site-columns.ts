import type { InputIssue } from '../errors/input-error.ts';
import { encodeRecord, MAX_RECORD_BYTES, RECORD_HEADER_BYTES, recordsTooLarge, recordTooLarge } from '../details/record-codec.ts';
import { siteTableSteps, type SiteTable } from '../geo/site-table.ts';
import { runSteps, type Steps } from '../steps/steps.ts';

/**
 * What a build keeps of a site table: ids, coordinates and every site's encoded private record,
 * in columns. A 100,000-site table held as Site objects takes about 70 MB of heap (measured);
 * these columns take about a fifth of that, most of it the records in one buffer.
 */
export interface SiteColumns {
  ids: string[];
  lats: Float64Array;
  lons: Float64Array;
  detailColumns: string[];
  /**
   * Records one after another (record-codec.ts, unpadded); record i is bytes[offsets[i], offsets[i + 1]).
   * `longest` is the padded length: the longest record, at least the fixed header.
   */
  records: { bytes: Uint8Array; offsets: Uint32Array; longest: number };
}

/** Record i of the columns, a view into the shared buffer. */
export function recordAt(columns: SiteColumns, i: number): Uint8Array {
  const { bytes, offsets } = columns.records;
  return bytes.subarray(offsets[i]!, offsets[i + 1]!);
}

/**
 * Reads a site table from CSV text straight into columns (scanSiteTable: the same checks and
 * errors as parseSiteTable), encoding each record as its row is read. Throws InputError
 * `site_table`, `site_table_too_large`, or `record_too_large` naming the rows over the limit.
 */
export function readSiteColumns(csv: string): SiteColumns {
  return runSteps(siteColumnSteps(csv));
}

/** readSiteColumns as steps (core/steps): a checkpoint every 2,000 rows. */
export function* siteColumnSteps(csv: string): Steps<SiteColumns> {
  // A record holds its row's text and 17 bytes more: sized from the text, the buffer rarely grows.
  const build = columnBuilder(Math.ceil(csv.length * 1.25) + 65536);
  const { detailColumns } = yield* siteTableSteps(csv, (site, row, columns) => build.add(site, row, columns));
  return build.finish(detailColumns);
}

/** The columns of a table already parsed (buildVersion's callers: the CLI's plan, tests, the bench). */
export function siteColumnsOf(table: SiteTable): SiteColumns {
  const build = columnBuilder();
  table.sites.forEach((site, i) => build.add(site, table.rows?.[i] ?? -1, table.detailColumns));
  return build.finish(table.detailColumns);
}

function columnBuilder(recordBytes = 65536) {
  const ids: string[] = [];
  let lats = new Float64Array(1024);
  let lons = new Float64Array(1024);
  let bytes = new Uint8Array(recordBytes);
  let offsets = new Uint32Array(1025);
  let used = 0;
  let longest = RECORD_HEADER_BYTES;
  const tooLong: InputIssue[] = [];
  const grow = <A extends Float64Array | Uint32Array | Uint8Array>(a: A, need: number): A => {
    if (need <= a.length) return a;
    const bigger = new (a.constructor as new (n: number) => A)(Math.max(need, 2 * a.length));
    bigger.set(a);
    return bigger;
  };
  return {
    add(site: SiteTable['sites'][number], row: number, detailColumns: readonly string[]) {
      const i = ids.length;
      ids.push(site.id);
      lats = grow(lats, i + 1);
      lons = grow(lons, i + 1);
      lats[i] = site.lat;
      lons[i] = site.lon;
      const record = encodeRecord(site, detailColumns);
      if (record.length > MAX_RECORD_BYTES) tooLong.push(recordTooLarge(row < 0 ? undefined : row, i, site.id, record.length));
      bytes = grow(bytes, used + record.length);
      bytes.set(record, used);
      used += record.length;
      offsets = grow(offsets, i + 2);
      offsets[i + 1] = used;
      longest = Math.max(longest, record.length);
    },
    finish(detailColumns: string[]): SiteColumns {
      if (tooLong.length > 0) throw recordsTooLarge(tooLong);
      const n = ids.length;
      return {
        ids,
        lats: lats.slice(0, n),
        lons: lons.slice(0, n),
        detailColumns,
        // Views, not copies: a copy would hold both at once at the largest moment of the build.
        records: { bytes: bytes.subarray(0, used), offsets: offsets.subarray(0, n + 1), longest },
      };
    },
  };
}
