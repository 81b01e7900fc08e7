import { nearestCandidates } from '../core/geo/candidates.ts';
import { locateRegion } from '../core/geo/locate.ts';
import { ManifestSchema, MAX_K, type Manifest } from '../core/geo/manifest.ts';
import type { PirKeyPair } from '../core/pir/keys.ts';
import { DEFAULT_MODULUS_BITS } from '../core/pir/params.ts';
import { makeQuery } from '../core/pir/query.ts';
import { decodeAnswerWire, encodeQuery } from '../core/pir/wire.ts';
import type { SiteRecord } from '../core/details/record-codec.ts';
import { checkKeyLifetime, memoryKeyStore, type ClientKeyStore, type KeyLifetime } from './client-key.ts';
import { candidatesFromAnswer } from './region-answer.ts';
import { fetchRecords, memorySealedCache, type DetailsCost, type SealedFileCache } from './details-round.ts';
import { NearveilError, send, serverTimingMs, type FetchLike } from './http.ts';
import { keyKeeper, type KeyReadyCost } from './key-keeper.ts';
import { fetchCellRecord, type PartitionRoundCost } from './partition-round.ts';
import { cautionsFor, type Caution } from '../core/cautions/cautions.ts';
import { isFarFromCoverage, manifestCoverage } from '../core/geo/coverage.ts';

export interface ConnectOptions {
  /** Base URL of the nearveil API, for example http://127.0.0.1:8787 */
  endpoint: string;
  apiKey: string;
  /** 2048 (default) or 3072. */
  modulusBits?: number;
  /**
   * Where the client keeps its key between runs (default: memory). A key is made and proven on
   * first use, registered once with the server, and replaced after `keyLifetime`.
   */
  keyStore?: ClientKeyStore;
  /** When a key is replaced: after `days` or `queries`, whichever comes first (default 7 days, 1,000 queries). */
  keyLifetime?: Partial<KeyLifetime>;
  /** A key pair made elsewhere, used for every query as it is and never replaced (keyStore and keyLifetime are then ignored). */
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
  /**
   * Only when this call had to make, prove or register its key first (a new client, or a key
   * past its lifetime): what that cost. The proof is sent once per key and server.
   */
  keySetup?: KeyReadyCost;
}

export interface NearestResult {
  dataset: string;
  version: number;
  results: NearestSite[];
  /**
   * True when the point lies more than 50 km outside the box around the sites (the manifest's
   * grid, veiled or coverage box): the nearest listed site may be very far. False when the
   * manifest tells no box (adaptive versions built before it carried one).
   */
  farFromCoverage: boolean;
  /** What to show beside the results (DESIGN.md cautions; far_from_coverage first when it applies). */
  cautions: Caution[];
  cost: QueryCost & { details?: DetailsCost };
}

export interface NearveilClient {
  nearest(dataset: string, point: { lat: number; lon: number }, options?: NearestOptions): Promise<NearestResult>;
  manifest(dataset: string): Promise<Manifest>;
  /** The key pair queries use now (made, proven and registered first when needed). */
  keyPair(): Promise<PirKeyPair>;
  /** Drops the stored key: the next query makes, proves and registers a new one. */
  forgetKey(): Promise<void>;
}

/**
 * Connects to a nearveil API. The key pair is the costly part of the client's work: it is made
 * and proven once, registered once with the server (POST /v1/moduli: the server answers only
 * proven moduli), and reused for every query until its lifetime ends; each query is still fresh.
 */
export function connect(options: ConnectOptions): NearveilClient {
  const http = { endpoint: options.endpoint, secret: options.apiKey, ...(options.fetch ? { fetch: options.fetch } : {}) };
  const modulusBits = options.keyPair?.modulusBits ?? options.modulusBits ?? DEFAULT_MODULUS_BITS;
  const keys = keyKeeper({
    http,
    modulusBits,
    store: options.keyPair ? memoryKeyStore() : (options.keyStore ?? memoryKeyStore()),
    lifetime: checkKeyLifetime(options.keyLifetime),
    ...(options.keyPair ? { fixedKey: options.keyPair } : {}),
  });
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
    const ready = await keys.ready();
    const key = ready.entry.key;
    // Every round below is one query with this key, counted for its lifetime even when one fails.
    const rounds = 1 + (m.layout.kind === 'veiled' ? 1 : 0) + (wanted.details ? k : 0);
    await keys.used(ready.entry, rounds);
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
    const rows = decodeAnswerWire(answerBytes);
    if (rows.count !== m.matrix.rows) {
      throw new NearveilError(0, 'answer_shape', `answer has ${rows.count} rows, manifest says ${m.matrix.rows}`);
    }
    const { candidates } = candidatesFromAnswer(key, m, rows, region);
    // Exact: the region's list holds every site among the maxK nearest of any of its points.
    const found = nearestCandidates(candidates, point.lat, point.lon, k);
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
    const farFromCoverage = isFarFromCoverage(manifestCoverage(m), point.lat, point.lon);
    return {
      dataset,
      version: m.version,
      results,
      farFromCoverage,
      cautions: cautionsFor(farFromCoverage),
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
        ...(ready.cost ? { keySetup: ready.cost } : {}),
      },
    };
  }

  return {
    manifest,
    keyPair: async () => (await keys.ready()).entry.key,
    forgetKey: () => keys.forget(),
    async nearest(dataset, point, wanted = {}) {
      const k = wanted.k ?? 1;
      if (!Number.isSafeInteger(k) || k < 1 || k > MAX_K) throw new RangeError(`nearest: expected k in 1..${MAX_K}, got ${wanted.k}`);
      try {
        return await nearestOnce(dataset, point, k, wanted);
      } catch (err) {
        // A version published between our manifest read and our query: read again, once.
        if (err instanceof NearveilError && err.code === 'version_not_served') return nearestOnce(dataset, point, k, wanted);
        // The server forgot our modulus (its registration expired, or its database is new): register again, once.
        if (err instanceof NearveilError && err.code === 'modulus_unproven') {
          await keys.unregistered();
          return nearestOnce(dataset, point, k, wanted);
        }
        throw err;
      }
    },
  };
}
