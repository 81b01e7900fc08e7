import { locateCell } from '../core/geo/locate.ts';
import type { Manifest } from '../core/geo/manifest.ts';
import { readRecord, type PartitionRecord } from '../core/geo/veiled-layout.ts';
import { decodeRows } from '../core/pir/decode.ts';
import type { PirKeyPair } from '../core/pir/keys.ts';
import { makeQuery } from '../core/pir/query.ts';
import { decodeAnswerWire, encodeQuery } from '../core/pir/wire.ts';
import { NearveilError, send, serverTimingMs, type HttpOptions } from './http.ts';

/** What the first round of a veiled layout cost (it is metered like any query). */
export interface PartitionRoundCost {
  rows: number;
  columns: number;
  matrixOnes: number;
  bytesUp: number;
  bytesDown: number;
  serverMs: number | null;
  clientMs: number;
}

/**
 * The first private round of a veiled layout: asks the partition matrix for the column holding
 * the point's coarse cell, and decodes that cell's record. The server sees one query over all
 * coarse cells' columns and learns neither the cell nor the point. Throws NearveilError on a
 * refusal or an answer of the wrong shape, RangeError (from readRecord) on a record that does
 * not parse.
 */
export async function fetchCellRecord(
  http: HttpOptions,
  dataset: string,
  manifest: Manifest,
  key: PirKeyPair,
  point: { lat: number; lon: number },
): Promise<{ record: PartitionRecord; cost: PartitionRoundCost }> {
  const partition = manifest.partition;
  if (manifest.layout.kind !== 'veiled' || !partition) throw new TypeError(`fetchCellRecord: expected a veiled layout, got ${manifest.layout.kind}`);
  const cell = locateCell(manifest, point.lat, point.lon);
  const t0 = performance.now();
  const body = encodeQuery(key.n, makeQuery(key, partition.columns, cell.column));
  const t1 = performance.now();
  const path = `v1/datasets/${encodeURIComponent(dataset)}/versions/${manifest.version}/query?matrix=partition`;
  const response = await send(http, 'POST', path, body, 'application/octet-stream');
  const answerBytes = new Uint8Array(await response.arrayBuffer());
  const t2 = performance.now();
  const rows = decodeAnswerWire(answerBytes);
  if (rows.count !== partition.rows) {
    throw new NearveilError(0, 'answer_shape', `partition answer has ${rows.count} rows, manifest says ${partition.rows}`);
  }
  const record = readRecord(manifest.layout, decodeRows(key, rows, cell.rowStart, cell.rowStart + cell.rowCount));
  return {
    record,
    cost: {
      rows: partition.rows,
      columns: partition.columns,
      matrixOnes: partition.ones,
      bytesUp: body.length,
      bytesDown: answerBytes.length,
      serverMs: serverTimingMs(response),
      clientMs: t1 - t0 + (performance.now() - t2),
    },
  };
}
