import { ManifestSchema, type Layout, type Manifest, type PartitionMatrix } from '../geo/manifest.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../geo/quantise.ts';
import { recordLayout } from '../geo/record.ts';
import type { SiteTable } from '../geo/site-table.ts';
import { buildSitePoints } from '../geo/site-points.ts';
import { countOnes, type BitMatrix } from '../matrix/bit-matrix.ts';
import { encodeMatrixBlob } from '../matrix/matrix-blob.ts';
import { choosePlan } from '../pir/answer-plan.ts';
import { buildDetails } from '../details/build-details.ts';
import { chooseLayout, type LayoutCandidate, type LayoutChoice } from './choose-layout.ts';
import type { ShapeCost } from './cost-model.ts';
import { fillMatrix } from './fill-matrix.ts';
import { planRecord } from './plan-record.ts';
import { fillPartitionMatrix } from './fill-partition-matrix.ts';
import { sha256Hex } from './sha256-hex.ts';

export interface BuildResult {
  manifest: Manifest;
  matrix: BitMatrix;
  matrixBlob: Uint8Array<ArrayBuffer>;
  /** The sealed file and details matrix, when the build was given a details secret. */
  details?: { sealedFile: Uint8Array<ArrayBuffer>; matrix: BitMatrix; matrixBlob: Uint8Array<ArrayBuffer> };
  /** Veiled layouts only: the partition matrix (first private round) and its stored form. */
  partition?: { matrix: BitMatrix; blob: Uint8Array<ArrayBuffer> };
  stats: { regions: number; maxList: number; meanList: number; buildMs: number };
  /**
   * Every layout weighed, with its modelled cost per query (the chosen one is `chosen: true`);
   * veiled ones also give each round's cost. `eligible` is false for layouts weighed only for
   * comparison (veiled under 'auto', or all others when `weighAll` is set).
   */
  layoutsTried: Array<{
    label: string;
    kind: Layout['kind'];
    regions: number;
    maxList: number;
    chosen: boolean;
    eligible: boolean;
    cost: ShapeCost;
    rounds?: { partition: ShapeCost; cells: ShapeCost };
  }>;
}

/** Moduli a client may use against this version (see the design's protocol section). */
const MODULUS_BITS: Manifest['modulusBits'] = [2048, 3072];

/**
 * Builds one version of a site table: quantised coordinates, a grid layout with exact candidate
 * lists (core/geo/region-lists.ts), the packed cell matrix, its stored form and the manifest.
 * Deterministic: the same table and meta give the same blob, hash and manifest; only
 * stats.buildMs varies. Site index = position in `table.sites`.
 * With `detailsSecret` (32 bytes from a CSPRNG, kept server-side only) it also seals every
 * record and lays out the details matrix (core/details); without it, the version has no
 * private details (manifest.details absent). Throws InputError `record_too_large` naming rows.
 * Throws RangeError for an empty table or bad meta; the manifest is re-checked against
 * ManifestSchema before it is returned.
 */
export async function buildVersion(
  table: SiteTable,
  meta: { dataset: string; version: number; layout?: LayoutChoice; weighAll?: boolean; detailsSecret?: Uint8Array },
): Promise<BuildResult> {
  const started = performance.now();
  const n = table.sites.length;
  if (n < 1) throw new RangeError('buildVersion: expected at least one site, got 0');
  if (typeof meta.dataset !== 'string' || meta.dataset === '') {
    throw new RangeError(`buildVersion: expected a dataset name, got ${JSON.stringify(meta.dataset)}`);
  }
  if (!Number.isSafeInteger(meta.version) || meta.version < 1) {
    throw new RangeError(`buildVersion: expected version >= 1, got ${meta.version}`);
  }
  // Details first: a record over the size limit fails the build before the costly geometry.
  const details = meta.detailsSecret === undefined ? undefined : await buildDetails(table, meta.detailsSecret);
  const codes = table.sites.map((s) => [quantiseLat(s.lat), quantiseLon(s.lon)] as const);
  const lats = Float64Array.from(codes, ([lat]) => dequantiseLat(lat));
  const lons = Float64Array.from(codes, ([, lon]) => dequantiseLon(lon));
  const points = buildSitePoints(lats, lons);
  const slotBits = recordLayout(n, 1).slotBits;
  // 1-bits of each site's slot (index + 1, then the two codes): what a list entry adds to the matrix.
  const siteOnes = Int32Array.from(codes, ([lat, lon], s) => popcount(s + 1) + popcount(lat) + popcount(lon));
  const { chosen: choice, tried } = chooseLayout(points, slotBits, siteOnes, meta.layout ?? 'auto', { weighAll: meta.weighAll === true });
  const record = recordLayout(n, choice.slotsPerRegion);
  const matrix = fillMatrix(choice.lists, codes, record, choice.packing);
  const matrixBlob = encodeMatrixBlob(matrix);
  const planned = choosePlan(matrix);
  const partition = choice.partition && choice.layout.kind === 'veiled' ? fillPartitionMatrix(choice.partition.records, choice.layout, choice.partition.packing) : undefined;
  const partitionBlob = partition ? encodeMatrixBlob(partition) : undefined;
  let partitionRecord: PartitionMatrix | undefined;
  if (partition && partitionBlob) {
    partitionRecord = {
      rows: partition.rows,
      columns: partition.columns,
      cellsPerColumn: choice.partition!.packing.regionsPerColumn,
      ones: countOnes(partition),
      plan: planRecord(choosePlan(partition)),
      contentHash: await sha256Hex(partitionBlob),
    };
  }
  const manifest = ManifestSchema.parse({
    format: 'nearveil-manifest',
    formatVersion: 1,
    dataset: meta.dataset,
    version: meta.version,
    siteCount: n,
    contentHash: await sha256Hex(matrixBlob),
    modulusBits: MODULUS_BITS,
    layout: choice.layout,
    record,
    matrix: {
      rows: matrix.rows,
      columns: matrix.columns,
      regionsPerColumn: choice.packing.regionsPerColumn,
      ones: countOnes(matrix),
      plan: planRecord(planned),
    },
    siteIds: table.sites.map((s) => s.id),
    ...(details
      ? {
          details: {
            columns: details.columns,
            recordBytes: details.recordBytes,
            sealedRecordBytes: details.sealedRecordBytes,
            sealedHash: details.sealedHash,
            sealedBytes: details.sealedFile.length,
            keyBits: 128 as const,
            keysPerColumn: details.keysPerColumn,
            matrix: {
              contentHash: details.matrixHash,
              rows: details.matrix.rows,
              columns: details.matrix.columns,
              ones: countOnes(details.matrix),
              plan: planRecord(details.plan),
            },
          },
        }
      : {}),
    ...(partitionRecord ? { partition: partitionRecord } : {}),
  } satisfies Manifest);
  const total = choice.lists.reduce((sum, l) => sum + l.length, 0);
  return {
    manifest,
    matrix,
    matrixBlob,
    ...(details ? { details: { sealedFile: details.sealedFile, matrix: details.matrix, matrixBlob: details.matrixBlob } } : {}),
    ...(partition && partitionBlob ? { partition: { matrix: partition, blob: partitionBlob } } : {}),
    stats: {
      regions: choice.lists.length,
      maxList: record.slotsPerRegion,
      meanList: total / choice.lists.length,
      buildMs: performance.now() - started,
    },
    layoutsTried: tried.map((g: LayoutCandidate) => ({
      label: g.label,
      kind: g.layout.kind,
      regions: g.lists.length,
      maxList: g.slotsPerRegion,
      chosen: g === choice,
      eligible: g.eligible,
      cost: g.cost,
      ...(g.partition ? { rounds: g.partition.rounds } : {}),
    })),
  };
}

function popcount(x: number): number {
  let count = 0;
  for (let v = x >>> 0; v !== 0; v &= v - 1) count++;
  return count;
}
