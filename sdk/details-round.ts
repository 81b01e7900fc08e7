import { sha256Hex } from '../core/build/sha256-hex.ts';
import { detailsKeyLocation, openRecord } from '../core/details/open-record.ts';
import type { SiteRecord } from '../core/details/record-codec.ts';
import { decodeSealedFile, type SealedFile } from '../core/details/sealed-file.ts';
import type { Manifest } from '../core/geo/manifest.ts';
import { decodeRows } from '../core/pir/decode.ts';
import type { PirKeyPair } from '../core/pir/keys.ts';
import { makeQuery } from '../core/pir/query.ts';
import { decodeAnswerWire, encodeQuery } from '../core/pir/wire.ts';
import { NearveilError, send, serverTimingMs, type HttpOptions } from './http.ts';

/** Where a client keeps sealed files between runs (the CLI keeps them on disk); keyed by SHA-256. */
export interface SealedFileCache {
  get(sha256: string): Promise<Uint8Array | null>;
  put(sha256: string, bytes: Uint8Array): Promise<void>;
}

export interface DetailsCost {
  /** One details query per result, always, so the count says nothing about where they lie. */
  queries: number;
  bytesUp: number;
  bytesDown: number;
  /** Bytes of the sealed file downloaded by this call (0 when it was kept from before). */
  sealedBytes: number;
  /** Server time summed over the details queries, from Server-Timing. */
  serverMs: number | null;
  clientMs: number;
}

/** Keeps the sealed files of the versions a client used last, in memory. */
export function memorySealedCache(limit = 2): SealedFileCache {
  const files = new Map<string, Uint8Array>();
  return {
    async get(sha256) {
      return files.get(sha256) ?? null;
    },
    async put(sha256, bytes) {
      if (files.size >= limit) files.delete(files.keys().next().value!);
      files.set(sha256, bytes);
    },
  };
}

/**
 * The details round: the version's sealed file (downloaded whole, or kept from before, and
 * checked against the manifest's SHA-256) and one private query per site on the details matrix,
 * with the client's own key pair. Returns the sites' records in the order asked.
 * Throws NearveilError `details_unavailable` for a version built without details, and
 * `record_refused` when a record fails its check (tampered, or an answer for another key).
 */
export async function fetchRecords(
  http: HttpOptions,
  manifest: Manifest,
  key: PirKeyPair,
  indices: readonly number[],
  cache: SealedFileCache,
): Promise<{ records: SiteRecord[]; cost: DetailsCost }> {
  const details = manifest.details;
  if (!details) {
    throw new NearveilError(0, 'details_unavailable', `version ${manifest.version} of "${manifest.dataset}" was built without private details`);
  }
  const base = `v1/datasets/${encodeURIComponent(manifest.dataset)}/versions/${manifest.version}/details`;
  let clientMs = 0;
  const sealedPromise = sealedFile(http, `${base}/sealed`, details.sealedHash, cache);
  const asked = indices.map(async (index) => {
    const t0 = performance.now();
    const where = detailsKeyLocation(details, manifest.siteCount, index);
    const body = encodeQuery(key.n, makeQuery(key, details.matrix.columns, where.column));
    clientMs += performance.now() - t0;
    const response = await send(http, 'POST', `${base}/query`, body, 'application/octet-stream');
    const answer = new Uint8Array(await response.arrayBuffer());
    const t1 = performance.now();
    const rows = decodeAnswerWire(answer);
    if (rows.count !== details.matrix.rows) {
      throw new NearveilError(0, 'answer_shape', `details answer has ${rows.count} rows, manifest says ${details.matrix.rows}`);
    }
    const bits = decodeRows(key, rows, where.rowStart, where.rowStart + where.rowCount);
    clientMs += performance.now() - t1;
    return { index, bits, up: body.length, down: answer.length, serverMs: serverTimingMs(response) };
  });
  const [sealed, answers] = await Promise.all([sealedPromise, Promise.all(asked)]);
  const t2 = performance.now();
  const records: SiteRecord[] = [];
  for (const a of answers) {
    try {
      records.push(await openRecord(details, sealed.file, a.index, a.bits));
    } catch (err) {
      const reason = err instanceof Error ? err.message : String(err);
      throw new NearveilError(0, 'record_refused', `details of site index ${a.index}: ${reason}`);
    }
  }
  clientMs += performance.now() - t2;
  const timings = answers.map((a) => a.serverMs);
  return {
    records,
    cost: {
      queries: answers.length,
      bytesUp: answers.reduce((s, a) => s + a.up, 0),
      bytesDown: answers.reduce((s, a) => s + a.down, 0),
      sealedBytes: sealed.downloaded,
      serverMs: timings.some((t) => t === null) ? null : timings.reduce((s: number, t) => s + t!, 0),
      clientMs,
    },
  };
}

async function sealedFile(http: HttpOptions, path: string, sha256: string, cache: SealedFileCache): Promise<{ file: SealedFile; downloaded: number }> {
  const kept = await cache.get(sha256);
  if (kept && (await sha256Hex(Uint8Array.from(kept))) === sha256) return { file: decodeSealedFile(kept), downloaded: 0 };
  const response = await send(http, 'GET', path);
  const bytes = new Uint8Array(await response.arrayBuffer());
  // The manifest names the file by its SHA-256: a changed or truncated file is refused whole.
  if ((await sha256Hex(bytes)) !== sha256) {
    throw new NearveilError(0, 'record_refused', `the sealed file does not match the manifest's SHA-256 ${sha256}; refused`);
  }
  await cache.put(sha256, bytes);
  return { file: decodeSealedFile(bytes), downloaded: bytes.length };
}
