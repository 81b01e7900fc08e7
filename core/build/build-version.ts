import { siteCoverage } from '../geo/coverage.ts';
import { ManifestSchema, MAX_K, regionCount, type Layout, type Manifest, type PartitionMatrix } from '../geo/manifest.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../geo/quantise.ts';
import { recordLayout } from '../geo/record.ts';
import type { SiteTable } from '../geo/site-table.ts';
import { siteColumnsOf, type SiteColumns } from './site-columns.ts';
import { buildSitePoints } from '../geo/site-points.ts';
import { countOnes, type BitMatrix } from '../matrix/bit-matrix.ts';
import { encodeMatrixBlob } from '../matrix/matrix-blob.ts';
import { InputError } from '../errors/input-error.ts';
import { ANSWER_MEMORY_BUDGET_BYTES, answerMemory, type PlanShape } from '../pir/answer-memory.ts';
import { choosePlanSteps, type AnswerPlan, type PlanChoice } from '../pir/answer-plan.ts';
import { buildDetails } from '../details/build-details.ts';
import { runStepsPaused } from '../steps/steps.ts';
import { checkLayoutFits, chooseLayoutSteps, MEMORY_CHECK_BITS, type LayoutCandidate, type LayoutChoice, type LayoutVerdict } from './choose-layout.ts';
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
  /** `listLengths[n]`: regions whose candidate list holds n sites (before padding). */
  stats: { regions: number; maxList: number; meanList: number; listLengths: number[]; buildMs: number };
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
    /** Why it was or was not chosen (choose-layout.ts). */
    verdict: LayoutVerdict;
    /** The least memory an answer on its matrix needs, at 3072 bits. */
    answerBytes: number;
    cost: ShapeCost;
    /** True when only a lower bound was computed (the layout lost on that bound alone). */
    bound: boolean;
    rounds?: { partition: ShapeCost; cells: ShapeCost };
  }>;
}

/** Moduli a client may use against this version (see the design's protocol section). */
const MODULUS_BITS: Manifest['modulusBits'] = [2048, 3072];

/**
 * Mining column sets (mined-plan.ts) grows faster than the matrix; past this many bits it takes
 * longer than the rest of the build together, and the server would have to mine again. Larger
 * matrices weigh plain and blocked plans only.
 */
export const MINE_LIMIT_BITS = 4_000_000;

/** Where a build is: stage name and overall percent (0-100, never decreasing). */
export interface BuildProgress {
  stage: 'details' | 'regions' | 'matrix' | 'plan' | 'hash' | 'done';
  percent: number;
}

export interface BuildOptions {
  /** Called as the build moves on, at every checkpoint (core/steps); a returned promise is awaited. */
  onProgress?: (p: BuildProgress) => void | Promise<void>;
  /**
   * Awaited at every checkpoint (a few milliseconds of work apart), so a caller sharing its thread
   * can let other work run: the Worker's build lets requests on the same isolate through.
   */
  pause?: () => void | Promise<void>;
  /**
   * Stores the sealed file and the details matrix as soon as they are made; the build then keeps
   * neither (BuildResult.details is absent), so their memory is free while the layout is built.
   */
  storeDetails?: (blobs: { sealedFile: Uint8Array<ArrayBuffer>; sealedHash: string; matrixBlob: Uint8Array<ArrayBuffer>; matrixHash: string }) => Promise<void>;
}

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
  meta: BuildMeta,
  options: BuildOptions = {},
): Promise<BuildResult> {
  return buildFromColumns(siteColumnsOf(table), meta, options);
}

export interface BuildMeta {
  dataset: string;
  version: number;
  layout?: LayoutChoice;
  weighAll?: boolean;
  maxK?: number;
  detailsSecret?: Uint8Array;
  memoryBudgetBytes?: number;
}

/**
 * buildVersion on the columns of a table (site-columns.ts): what the Worker's build runs, reading
 * its CSV straight into columns so a large table fits an isolate. The same result as buildVersion
 * on the same table. Consumes `sites.records`: they are dropped once sealed.
 */
export async function buildFromColumns(sites: SiteColumns, meta: BuildMeta, options: BuildOptions = {}): Promise<BuildResult> {
  const started = performance.now();
  const n = sites.ids.length;
  if (n < 1) throw new RangeError('buildVersion: expected at least one site, got 0');
  if (typeof meta.dataset !== 'string' || meta.dataset === '') {
    throw new RangeError(`buildVersion: expected a dataset name, got ${JSON.stringify(meta.dataset)}`);
  }
  if (!Number.isSafeInteger(meta.version) || meta.version < 1) {
    throw new RangeError(`buildVersion: expected version >= 1, got ${meta.version}`);
  }
  const maxK = meta.maxK ?? 1;
  if (!Number.isSafeInteger(maxK) || maxK < 1 || maxK > MAX_K) throw new RangeError(`buildVersion: expected maxK in 1..${MAX_K}, got ${meta.maxK}`);
  let percent = 0;
  const report = (stage: BuildProgress['stage'], at: number) => {
    percent = Math.max(percent, Math.min(100, Math.round(at * 10) / 10));
    return options.onProgress?.({ stage, percent });
  };
  await report(meta.detailsSecret === undefined ? 'regions' : 'details', 0);
  // Details first: a record over the size limit fails the build before the costly geometry.
  const checkpoint = async (stage: BuildProgress['stage'], at: number) => {
    await report(stage, at);
    await options.pause?.();
  };
  const details = meta.detailsSecret === undefined ? undefined : await detailsStep(sites, meta.detailsSecret, options, (share) => checkpoint('details', 10 * share));
  const { codes, points, slotBits, siteOnes } = layoutInputs(sites.lats, sites.lons);
  await checkpoint('regions', details ? 10 : 0);
  const budget = meta.memoryBudgetBytes ?? ANSWER_MEMORY_BUDGET_BYTES;
  const { chosen: choice, tried } = await runStepsPaused(
    chooseLayoutSteps(points, slotBits, siteOnes, meta.layout ?? 'auto', { weighAll: meta.weighAll === true, k: maxK, memoryBudgetBytes: budget }),
    (share) => checkpoint('regions', (details ? 10 : 0) + (details ? 70 : 80) * share),
  );
  await checkpoint('matrix', 80);
  const record = recordLayout(n, choice.slotsPerRegion);
  const matrix = fillMatrix(choice.lists, codes, record, choice.packing);
  const matrixBlob = encodeMatrixBlob(matrix);
  await checkpoint('plan', 82);
  const weighedPlans = await runStepsPaused(choosePlanSteps(matrix, { mined: matrix.rows * matrix.columns <= MINE_LIMIT_BITS }), (share) => checkpoint('plan', 82 + 12 * share));
  const planned = planWithinMemory(weighedPlans, matrix.rows, matrix.columns, budget);
  const partition = choice.partition && choice.layout.kind === 'veiled' ? fillPartitionMatrix(choice.partition.records, choice.layout, choice.partition.packing) : undefined;
  const partitionBlob = partition ? encodeMatrixBlob(partition) : undefined;
  let partitionRecord: PartitionMatrix | undefined;
  if (partition && partitionBlob) {
    partitionRecord = {
      rows: partition.rows,
      columns: partition.columns,
      cellsPerColumn: choice.partition!.packing.regionsPerColumn,
      ones: countOnes(partition),
      plan: planRecord(planWithinMemory(await runStepsPaused(choosePlanSteps(partition), () => checkpoint('plan', 95)), partition.rows, partition.columns, budget)),
      contentHash: await sha256Hex(partitionBlob),
    };
  }
  await checkpoint('hash', 97);
  const manifest = ManifestSchema.parse({
    format: 'nearveil-manifest',
    formatVersion: 1,
    dataset: meta.dataset,
    version: meta.version,
    siteCount: n,
    contentHash: await sha256Hex(matrixBlob),
    modulusBits: MODULUS_BITS,
    layout: choice.layout,
    maxK,
    record,
    matrix: {
      rows: matrix.rows,
      columns: matrix.columns,
      regionsPerColumn: choice.packing.regionsPerColumn,
      ones: countOnes(matrix),
      plan: planRecord(planned),
    },
    siteIds: sites.ids,
    ...(details ? { details: details.manifest } : {}),
    ...(partitionRecord ? { partition: partitionRecord } : {}),
    ...(choice.layout.kind === 'kd' ? { coverage: siteCoverage(sites.lats, sites.lons) } : {}),
  } satisfies Manifest);
  const total = choice.lists.reduce((sum, l) => sum + l.length, 0);
  await report('done', 100);
  return {
    manifest,
    matrix,
    matrixBlob,
    ...(details?.kept ? { details: details.kept } : {}),
    ...(partition && partitionBlob ? { partition: { matrix: partition, blob: partitionBlob } } : {}),
    stats: {
      regions: choice.lists.length,
      maxList: record.slotsPerRegion,
      meanList: total / choice.lists.length,
      listLengths: lengthCounts(choice.lists),
      buildMs: performance.now() - started,
    },
    layoutsTried: tried.map((g: LayoutCandidate) => ({
      label: g.label,
      kind: g.layout.kind,
      regions: regionCount(g.layout),
      maxList: g.slotsPerRegion,
      chosen: g === choice,
      eligible: g.eligible,
      verdict: g.verdict,
      answerBytes: g.answerBytes,
      cost: g.cost,
      bound: g.bound,
      ...(g.partition ? { rounds: g.partition.rounds } : {}),
    })),
  };
}

/**
 * What the layout decision works on: quantised codes of every site, the places as a kd-tree, the
 * bits of one list slot and the 1-bits each site's slot adds to the matrix.
 */
export function layoutInputs(siteLats: ArrayLike<number>, siteLons: ArrayLike<number>) {
  const n = siteLats.length;
  // Quantised lat and lon of site s at 2s and 2s + 1.
  const codes = new Int32Array(2 * n);
  for (let s = 0; s < n; s++) {
    codes[2 * s] = quantiseLat(siteLats[s]!);
    codes[2 * s + 1] = quantiseLon(siteLons[s]!);
  }
  const lats = Float64Array.from({ length: n }, (_, s) => dequantiseLat(codes[2 * s]!));
  const lons = Float64Array.from({ length: n }, (_, s) => dequantiseLon(codes[2 * s + 1]!));
  const points = buildSitePoints(lats, lons);
  const slotBits = recordLayout(n, 1).slotBits;
  // 1-bits of each site's slot (index + 1, then the two codes): what a list entry adds to the matrix.
  const siteOnes = Int32Array.from({ length: n }, (_, s) => popcount(s + 1) + popcount(codes[2 * s]!) + popcount(codes[2 * s + 1]!));
  return { codes, points, slotBits, siteOnes };
}

/**
 * A build request's check before it is queued (checkLayoutFits): a named layout that cannot fit a
 * Worker's memory for one answer is refused at once, with advice, instead of failing later.
 */
export function checkBuildRequest(sites: Pick<SiteColumns, 'lats' | 'lons'>, layout: LayoutChoice, maxK: number, memoryBudgetBytes = ANSWER_MEMORY_BUDGET_BYTES): void {
  if (layout !== 'grid') return;
  const { points, slotBits, siteOnes } = layoutInputs(sites.lats, sites.lons);
  checkLayoutFits(points, slotBits, siteOnes, layout, { k: maxK, memoryBudgetBytes });
}

/**
 * Seals the records and lays out the details matrix, then lets go of what the rest of the build
 * does not need: the records (sites.records is emptied: a build consumes them) and, when the
 * caller stores the details itself (options.storeDetails), the sealed file and the matrix.
 */
async function detailsStep(sites: SiteColumns, secret: Uint8Array, options: BuildOptions, checkpoint: (share: number) => Promise<void>) {
  const built = await buildDetails(sites, secret, checkpoint);
  sites.records = { bytes: new Uint8Array(0), offsets: new Uint32Array(1), longest: 0 };
  const manifest: NonNullable<Manifest['details']> = {
    columns: built.columns,
    recordBytes: built.recordBytes,
    sealedRecordBytes: built.sealedRecordBytes,
    sealedHash: built.sealedHash,
    sealedBytes: built.sealedFile.length,
    keyBits: 128,
    keysPerColumn: built.keysPerColumn,
    matrix: { contentHash: built.matrixHash, rows: built.matrix.rows, columns: built.matrix.columns, ones: countOnes(built.matrix), plan: planRecord(built.plan) },
  };
  const blobs = { sealedFile: built.sealedFile, matrix: built.matrix, matrixBlob: built.matrixBlob };
  if (!options.storeDetails) return { manifest, kept: blobs };
  await options.storeDetails({ sealedFile: built.sealedFile, sealedHash: built.sealedHash, matrixBlob: built.matrixBlob, matrixHash: built.matrixHash });
  return { manifest, kept: undefined };
}

function lengthCounts(lists: readonly Int32Array[]): number[] {
  const counts: number[] = [];
  for (const l of lists) counts[l.length] = (counts[l.length] ?? 0) + 1;
  return Array.from(counts, (c) => c ?? 0);
}

const MiB = (bytes: number) => (bytes / 2 ** 20).toFixed(0);

function planShape(p: AnswerPlan): PlanShape {
  return p.kind === 'mined' ? { kind: 'mined', rules: p.mined.rules.length } : p;
}

/** The plan with the fewest products among those whose working memory fits the budget. */
function planWithinMemory(choice: PlanChoice, rows: number, columns: number, budget: number): PlanChoice {
  const fits = (p: AnswerPlan) => answerMemory(rows, columns, planShape(p), MEMORY_CHECK_BITS).peakBytes <= budget;
  if (fits(choice.plan)) return choice;
  const best = choice.weighed.filter((w) => fits(w.plan)).reduce<(typeof choice.weighed)[number] | null>((a, w) => (a === null || w.products < a.products ? w : a), null);
  if (best === null) throw new InputError('matrix_too_large', 'layout', `no answer plan fits ${MiB(budget)} MiB on a ${rows} x ${columns} matrix`, { status: 422 });
  return { plan: best.plan, products: best.products, weighed: choice.weighed };
}

function popcount(x: number): number {
  let count = 0;
  for (let v = x >>> 0; v !== 0; v &= v - 1) count++;
  return count;
}
