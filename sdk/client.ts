import { decodeCandidates, nearestCandidates } from '../core/geo/candidates.ts';
import { locateRegion } from '../core/geo/locate.ts';
import { ManifestSchema, MAX_K, type Manifest } from '../core/geo/manifest.ts';
import { decodeRows } from '../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../core/pir/keys.ts';
import { DEFAULT_MODULUS_BITS } from '../core/pir/params.ts';
import { makeQuery } from '../core/pir/query.ts';
import { decodeAnswer, encodeQuery } from '../core/pir/wire.ts';
import type { SiteRecord } from '../core/details/record-codec.ts';
import { fetchRecords, memorySealedCache, type DetailsCost, type SealedFileCache } from './details-round.ts';
import { NearveilError, send, serverTimingMs, type FetchLike } from './http.ts';
import { fetchCellRecord, type PartitionRoundCost } from './partition-round.ts';

export interface ConnectOptions {
  /** Base URL of the nearveil API, for example http://127.0.0.1:8787 */
  endpoint: string;
  apiKey: string;
  /** 2048 (default) or 3072. */
  modulusBits?: number;
  /** A key pair kept from an earlier session; otherwise one is generated on first use. */
  keyPair?: PirKeyPair;
  fetch?: FetchLike;
  /** Where sealed files are kept between calls (default: in memory, the last two versions). */
  sealedCache?: SealedFileCache;
}

export interface NearestOptions {
  /** How many sites, nearest first (default 1); at most the dataset's maxK (see its manifest). */
  k?: number;
  /** Also fetch the sites' full records in a second private round (core/details/DETAILS.md). */
  details?: boolean;
}

export interface NearestSite {
  index: number;
  id: string;
  name: string | null;
  lat: number;
  lon: number;
  distanceMeters: number;
  /** The site's full record (every column of its row), with `details: true` only. */
  record?: SiteRecord;
}

/** A query's cost: the shape and figures of one round (as PartitionRoundCost), and the key size. */
export interface QueryCost extends PartitionRoundCost {
  modulusBits: number;
  /**
   * Veiled layouts only: the first round (the coarse cell's record from the partition matrix).
   * bytesUp, bytesDown, serverMs and clientMs above then count both rounds; rows, columns and
   * matrixOnes stay the cell matrix's.
   */
  partition?: PartitionRoundCost;
}

export interface NearestResult {
  dataset: string;
  version: number;
  results: NearestSite[];
  cost: QueryCost & { details?: DetailsCost };
}

export interface NearveilClient {
  nearest(dataset: string, point: { lat: number; lon: number }, options?: NearestOptions): Promise<NearestResult>;
  manifest(dataset: string): Promise<Manifest>;
  keyPair(): Promise<PirKeyPair>;
}

/**
 * Connects to a nearveil API. The key pair is generated once per client (it is the costly
 * part of the client's work) and reused for every query; each query is still fresh.
 */
export function connect(options: ConnectOptions): NearveilClient {
  const http = { endpoint: options.endpoint, secret: options.apiKey, ...(options.fetch ? { fetch: options.fetch } : {}) };
  const modulusBits = options.keyPair?.modulusBits ?? options.modulusBits ?? DEFAULT_MODULUS_BITS;
  let keys: Promise<PirKeyPair> | undefined = options.keyPair ? Promise.resolve(options.keyPair) : undefined;
  const keyPair = () => (keys ??= generateKeyPair({ modulusBits }));
  const sealedCache = options.sealedCache ?? memorySealedCache();

  async function manifest(dataset: string): Promise<Manifest> {
    const response = await send(http, 'GET', `v1/datasets/${encodeURIComponent(dataset)}/manifest`);
    return ManifestSchema.parse(await response.json());
  }

  async function nearestOnce(dataset: string, point: { lat: number; lon: number }, k: number, wanted: NearestOptions): Promise<NearestResult> {
    const m = await manifest(dataset);
    if (k > m.maxK) {
      throw new NearveilError(0, 'k_too_large', `dataset "${dataset}" version ${m.version} is built for up to ${m.maxK} nearest, not ${k} (rebuild with a larger maxK)`);
    }
    if (!(m.modulusBits as readonly number[]).includes(modulusBits)) {
      throw new NearveilError(0, 'modulus_size', `dataset "${dataset}" accepts ${m.modulusBits.join(' or ')}-bit keys, not ${modulusBits}`);
    }
    const key = await keyPair();
    // A veiled layout publishes no partition: its coarse cell's record comes from a first private round.
    const first = m.layout.kind === 'veiled' ? await fetchCellRecord(http, dataset, m, key, point) : undefined;
    const region = locateRegion(m, point.lat, point.lon, first?.record);
    const t0 = performance.now();
    const body = encodeQuery(key.n, makeQuery(key, m.matrix.columns, region.column));
    const t1 = performance.now();
    const path = `v1/datasets/${encodeURIComponent(dataset)}/versions/${m.version}/query`;
    const response = await send(http, 'POST', path, body, 'application/octet-stream');
    const answerBytes = new Uint8Array(await response.arrayBuffer());
    const t2 = performance.now();
    const { rows } = decodeAnswer(answerBytes);
    if (rows.length !== m.matrix.rows) {
      throw new NearveilError(0, 'answer_shape', `answer has ${rows.length} rows, manifest says ${m.matrix.rows}`);
    }
    const bits = decodeRows(key, rows, region.rowStart, region.rowStart + region.rowCount);
    // Exact: the region's list holds every site among the maxK nearest of any of its points.
    const found = nearestCandidates(decodeCandidates(m, bits), point.lat, point.lon, k);
    const clientMs = t1 - t0 + (performance.now() - t2) + (first?.cost.clientMs ?? 0);
    const serverMs = serverTimingMs(response);
    const firstServerMs = first ? first.cost.serverMs : 0;
    const results: NearestSite[] = found.map((c) => ({ index: c.index, id: m.siteIds[c.index] ?? String(c.index), name: null, lat: c.lat, lon: c.lon, distanceMeters: c.distanceMeters }));
    // The second round asks with the same key pair, one details query per result.
    const details = wanted.details ? await fetchRecords(http, m, key, results.map((r) => r.index), sealedCache) : undefined;
    details?.records.forEach((record, i) => {
      results[i]!.record = record;
      results[i]!.name = record.name;
    });
    return {
      dataset,
      version: m.version,
      results,
      cost: {
        modulusBits,
        rows: m.matrix.rows,
        columns: m.matrix.columns,
        matrixOnes: m.matrix.ones,
        bytesUp: body.length + (first?.cost.bytesUp ?? 0),
        bytesDown: answerBytes.length + (first?.cost.bytesDown ?? 0),
        serverMs: serverMs === null || firstServerMs === null ? null : serverMs + firstServerMs,
        clientMs,
        ...(details ? { details: details.cost } : {}),
        ...(first ? { partition: first.cost } : {}),
      },
    };
  }

  return {
    manifest,
    keyPair,
    async nearest(dataset, point, wanted = {}) {
      const k = wanted.k ?? 1;
      if (!Number.isSafeInteger(k) || k < 1 || k > MAX_K) throw new RangeError(`nearest: expected k in 1..${MAX_K}, got ${wanted.k}`);
      try {
        return await nearestOnce(dataset, point, k, wanted);
      } catch (err) {
        // A version published between our manifest read and our query: read again, once.
        if (err instanceof NearveilError && err.code === 'version_not_served') return nearestOnce(dataset, point, k, wanted);
        throw err;
      }
    },
  };
}
