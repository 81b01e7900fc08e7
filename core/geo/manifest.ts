// zod/mini: the same checks as zod with a fraction of its size in the browser client's bundle.
import { z } from 'zod/mini';
import { LAT_BITS, LON_BITS } from './quantise.ts';
import { coarseCellCount } from './veiled-layout.ts';

/**
 * The public manifest of one built version: everything a client needs to find its region, ask
 * for the right column and decode the answer. Field by field in MANIFEST.md (same folder).
 * The cross-field rules below are the invariants locate.ts and candidates.ts rely on.
 */
const count = z.int().check(z.minimum(1), z.maximum(2 ** 32 - 1));

/** Largest k a build serves (k nearest sites); lists grow with k. */
export const MAX_K = 8;

export const GridLayoutSchema = z
  .object({
    kind: z.literal('grid'),
    latMin: z.number().check(z.minimum(-90), z.maximum(90)),
    latMax: z.number().check(z.minimum(-90), z.maximum(90)),
    lonMin: z.number().check(z.minimum(-180), z.lt(180)),
    lonMax: z.number(),
    rows: count,
    cols: count,
  })
  .check(z.refine((g) => g.latMin < g.latMax, { error: 'layout: expected latMin < latMax' }))
  .check(z.refine((g) => g.lonMin < g.lonMax && g.lonMax <= g.lonMin + 360, {
    error: 'layout: expected lonMin < lonMax <= lonMin + 360',
  }));

/** The adaptive layout (kd-layout.ts): preorder splits, null for a leaf (a region). */
export const KdLayoutSchema = z
  .object({
    kind: z.literal('kd'),
    lonStart: z.number().check(z.minimum(-360), z.maximum(360)),
    nodes: z.array(z.union([z.tuple([z.union([z.literal(0), z.literal(1)]), z.number()]), z.null()])).check(z.minLength(1)),
  })
  .check(z.refine((k) => isPreorderTree(k.nodes), { error: 'layout: expected nodes to be one complete tree in preorder' }));

/**
 * The veiled layout (veiled-layout.ts): only a coarse grid over a whole-degree box is public; each
 * coarse cell's kd partition is fetched privately from the partition matrix.
 */
export const VeiledLayoutSchema = z
  .object({
    kind: z.literal('veiled'),
    latMin: z.int().check(z.minimum(-90), z.maximum(90)),
    latMax: z.int().check(z.minimum(-90), z.maximum(90)),
    lonMin: z.int().check(z.minimum(-180), z.lt(180)),
    lonMax: z.int(),
    rows: count,
    cols: count,
    splitBits: z.int().check(z.minimum(0), z.maximum(8)),
    offsetBits: z.int().check(z.minimum(1), z.maximum(31)),
    partitionBits: count,
    regions: count,
  })
  .check(z.refine((g) => g.latMin < g.latMax, { error: 'layout: expected latMin < latMax' }))
  .check(z.refine((g) => g.lonMin < g.lonMax && g.lonMax <= g.lonMin + 360, { error: 'layout: expected lonMin < lonMax <= lonMin + 360' }))
  .check(z.refine((g) => 2 ** g.offsetBits >= g.regions, { error: 'layout: expected offsetBits to hold every region number' }))
  .check(z.refine((g) => g.partitionBits >= g.offsetBits + 1, { error: 'layout: expected partitionBits to hold an offset and a leaf' }));

/** The box around an adaptive layout's sites (core/geo/coverage.ts), rounded outward to 0.1 degree. */
export const CoverageSchema = z
  .object({
    latMin: z.number().check(z.minimum(-90), z.maximum(90)),
    latMax: z.number().check(z.minimum(-90), z.maximum(90)),
    lonMin: z.number().check(z.minimum(-180), z.lt(180)),
    lonMax: z.number(),
  })
  .check(z.refine((b) => b.latMin <= b.latMax && b.lonMin <= b.lonMax && b.lonMax <= b.lonMin + 360, { error: 'coverage: expected latMin <= latMax and lonMin <= lonMax <= lonMin + 360' }));

export const LayoutSchema = z.union([GridLayoutSchema, KdLayoutSchema, VeiledLayoutSchema]);
export type Layout = z.infer<typeof LayoutSchema>;

/** Regions of a layout: grid cells plus "outside", kd leaves, or the veiled layout's total. */
export function regionCount(layout: Layout): number {
  if (layout.kind === 'grid') return layout.rows * layout.cols + 1;
  if (layout.kind === 'veiled') return layout.regions;
  return layout.nodes.filter((n) => n === null).length;
}

function isPreorderTree(nodes: ReadonlyArray<unknown>): boolean {
  let open = 1;
  for (let i = 0; i < nodes.length; i++) {
    if (open === 0) return false;
    open += nodes[i] === null ? -1 : 1;
  }
  return open === 0;
}

export const RecordSchema = z
  .object({
    indexBits: z.int().check(z.minimum(1), z.maximum(31)),
    latBits: z.literal(LAT_BITS),
    lonBits: z.literal(LON_BITS),
    slotBits: count,
    slotsPerRegion: count,
    regionBits: count,
  })
  .check(z.refine((r) => r.slotBits === r.indexBits + r.latBits + r.lonBits, { error: 'record: expected slotBits = indexBits + latBits + lonBits' }))
  .check(z.refine((r) => r.regionBits === r.slotBits * r.slotsPerRegion, { error: 'record: expected regionBits = slotBits * slotsPerRegion' }));

/**
 * How the server answers this matrix (core/pir/answer-plan.ts), recorded with the build: the
 * products one answer costs with this plan and with the plain one, so the choice explains itself.
 */
const products = z.int().check(z.minimum(0));
/** Every plan the build weighed, e.g. { plan: 'blocked b=6', products: 86015 }: the reason for the choice. */
const weighed = z.optional(z.array(z.object({ plan: z.string(), products })));
export const PlanRecordSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('plain'), products, plainProducts: products, weighed }),
  z.object({ kind: z.literal('blocked'), blockColumns: z.int().check(z.minimum(1), z.maximum(12)), products, plainProducts: products, weighed }),
  // The rules are mined again from the stored matrix by the server (mining is deterministic).
  z.object({ kind: z.literal('mined'), rules: z.int().check(z.minimum(0)), products, plainProducts: products, weighed }),
]);
export type PlanRecord = z.infer<typeof PlanRecordSchema>;

const sha256 = z.string().check(z.regex(/^[0-9a-f]{64}$/));

/**
 * The private details of a version (core/details/DETAILS.md): the sealed file every client
 * downloads whole, and the details matrix of record keys a second private query reads.
 */
export const DetailsSchema = z
  .object({
    columns: z.array(z.string().check(z.minLength(1))),
    recordBytes: count,
    sealedRecordBytes: count,
    sealedHash: sha256,
    sealedBytes: count,
    keyBits: z.literal(128),
    keysPerColumn: z.int().check(z.minimum(1), z.maximum(16)),
    matrix: z.object({ contentHash: sha256, rows: count, columns: count, ones: z.int().check(z.minimum(0)), plan: PlanRecordSchema }),
  })
  .check(z.refine((d) => d.sealedRecordBytes === d.recordBytes + 16, { error: 'details: expected sealedRecordBytes = recordBytes + 16' }))
  .check(z.refine((d) => d.matrix.rows === d.keysPerColumn * d.keyBits, { error: 'details: expected matrix.rows = keysPerColumn * keyBits' }));
export type Details = z.infer<typeof DetailsSchema>;
/**
 * The partition matrix of a veiled layout: one padded record per coarse cell, cellsPerColumn
 * records stacked in a column (like regions in the cell matrix). Stored content-addressed.
 */
export const PartitionMatrixSchema = z.object({
  rows: count,
  columns: count,
  cellsPerColumn: count,
  ones: z.int().check(z.minimum(0)),
  plan: PlanRecordSchema,
  contentHash: z.string().check(z.regex(/^[0-9a-f]{64}$/)),
});
export type PartitionMatrix = z.infer<typeof PartitionMatrixSchema>;

export const ManifestSchema = z
  .object({
    format: z.literal('nearveil-manifest'),
    formatVersion: z.literal(1),
    dataset: z.string().check(z.minLength(1)),
    version: z.int().check(z.minimum(1)),
    siteCount: count,
    contentHash: sha256,
    modulusBits: z.array(z.union([z.literal(2048), z.literal(3072)])).check(z.minLength(1)),
    layout: LayoutSchema,
    /** Largest k the candidate lists serve (k nearest); absent in older manifests, meaning 1. */
    maxK: z._default(z.int().check(z.minimum(1), z.maximum(MAX_K)), 1),
    record: RecordSchema,
    matrix: z.object({ rows: count, columns: count, regionsPerColumn: count, ones: z.int().check(z.minimum(0)), plan: PlanRecordSchema }),
    siteIds: z.array(z.string().check(z.minLength(1))),
    /** Absent on versions built without details (before they existed, or by `nearveil plan`). */
    details: z.optional(DetailsSchema),
    partition: z.optional(PartitionMatrixSchema),
    /** Adaptive layouts only (the others' boxes are in their layout); absent in older manifests. */
    coverage: z.optional(CoverageSchema),
  })
  .check(z.refine((m) => m.siteIds.length === m.siteCount, { error: 'manifest: expected one site id per site' }))
  .check(z.refine((m) => 2 ** m.record.indexBits >= m.siteCount + 1, { error: 'manifest: expected indexBits to hold site index + 1' }))
  .check(z.refine((m) => m.matrix.rows === m.matrix.regionsPerColumn * m.record.regionBits, {
    error: 'manifest: expected matrix.rows = regionsPerColumn * regionBits',
  }))
  .check(z.refine((m) => m.matrix.columns === Math.ceil(regionCount(m.layout) / m.matrix.regionsPerColumn), {
    error: 'manifest: expected matrix.columns = ceil(regions / regionsPerColumn)',
  }))
  .check(z.refine((m) => !m.details || m.details.matrix.columns === Math.ceil(m.siteCount / m.details.keysPerColumn), {
    error: 'manifest: expected details.matrix.columns = ceil(siteCount / keysPerColumn)',
  }))
  .check(z.refine((m) => !m.details || m.details.sealedBytes === 12 + m.siteCount * m.details.sealedRecordBytes, {
    error: 'manifest: expected details.sealedBytes = 12 + siteCount * sealedRecordBytes',
  }))
  .check(z.refine((m) => m.coverage === undefined || m.layout.kind === 'kd', { error: 'manifest: expected coverage only on an adaptive (kd) layout' }))
  .check(z.refine((m) => (m.layout.kind === 'veiled') === (m.partition !== undefined), {
    error: 'manifest: expected a partition matrix exactly when the layout is veiled',
  }))
  .check(z.refine((m) => m.layout.kind !== 'veiled' || !m.partition || m.partition.rows === m.partition.cellsPerColumn * m.layout.partitionBits, {
    error: 'manifest: expected partition.rows = cellsPerColumn * partitionBits',
  }))
  .check(z.refine((m) => m.layout.kind !== 'veiled' || !m.partition || m.partition.columns === Math.ceil(coarseCellCount(m.layout) / m.partition.cellsPerColumn), {
    error: 'manifest: expected partition.columns = ceil(coarse cells / cellsPerColumn)',
  }));

export type Manifest = z.infer<typeof ManifestSchema>;

