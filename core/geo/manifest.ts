import { z } from 'zod';
import { LAT_BITS, LON_BITS } from './quantise.ts';
import { coarseCellCount } from './veiled-layout.ts';

/**
 * The public manifest of one built version: everything a client needs to find its region, ask
 * for the right column and decode the answer. Field by field in MANIFEST.md (same folder).
 * The cross-field rules below are the invariants locate.ts and candidates.ts rely on.
 */
const count = z.number().int().min(1).max(2 ** 32 - 1);

/** Largest k a build serves (k nearest sites); lists grow with k. */
export const MAX_K = 8;

export const GridLayoutSchema = z
  .object({
    kind: z.literal('grid'),
    latMin: z.number().min(-90).max(90),
    latMax: z.number().min(-90).max(90),
    lonMin: z.number().min(-180).lt(180),
    lonMax: z.number().finite(),
    rows: count,
    cols: count,
  })
  .refine((g) => g.latMin < g.latMax, { error: 'layout: expected latMin < latMax' })
  .refine((g) => g.lonMin < g.lonMax && g.lonMax <= g.lonMin + 360, {
    error: 'layout: expected lonMin < lonMax <= lonMin + 360',
  });

/** The adaptive layout (kd-layout.ts): preorder splits, null for a leaf (a region). */
export const KdLayoutSchema = z
  .object({
    kind: z.literal('kd'),
    lonStart: z.number().min(-360).max(360),
    nodes: z.array(z.union([z.tuple([z.union([z.literal(0), z.literal(1)]), z.number().finite()]), z.null()])).min(1),
  })
  .refine((k) => isPreorderTree(k.nodes), { error: 'layout: expected nodes to be one complete tree in preorder' });

/**
 * The veiled layout (veiled-layout.ts): only a coarse grid over a whole-degree box is public; each
 * coarse cell's kd partition is fetched privately from the partition matrix.
 */
export const VeiledLayoutSchema = z
  .object({
    kind: z.literal('veiled'),
    latMin: z.number().int().min(-90).max(90),
    latMax: z.number().int().min(-90).max(90),
    lonMin: z.number().int().min(-180).lt(180),
    lonMax: z.number().int(),
    rows: count,
    cols: count,
    splitBits: z.number().int().min(0).max(8),
    offsetBits: z.number().int().min(1).max(31),
    partitionBits: count,
    regions: count,
  })
  .refine((g) => g.latMin < g.latMax, { error: 'layout: expected latMin < latMax' })
  .refine((g) => g.lonMin < g.lonMax && g.lonMax <= g.lonMin + 360, { error: 'layout: expected lonMin < lonMax <= lonMin + 360' })
  .refine((g) => 2 ** g.offsetBits >= g.regions, { error: 'layout: expected offsetBits to hold every region number' })
  .refine((g) => g.partitionBits >= g.offsetBits + 1, { error: 'layout: expected partitionBits to hold an offset and a leaf' });

/** The box around an adaptive layout's sites (core/geo/coverage.ts), rounded outward to 0.1 degree. */
export const CoverageSchema = z
  .object({
    latMin: z.number().min(-90).max(90),
    latMax: z.number().min(-90).max(90),
    lonMin: z.number().min(-180).lt(180),
    lonMax: z.number().finite(),
  })
  .refine((b) => b.latMin <= b.latMax && b.lonMin <= b.lonMax && b.lonMax <= b.lonMin + 360, { error: 'coverage: expected latMin <= latMax and lonMin <= lonMax <= lonMin + 360' });

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
    indexBits: z.number().int().min(1).max(31),
    latBits: z.literal(LAT_BITS),
    lonBits: z.literal(LON_BITS),
    slotBits: count,
    slotsPerRegion: count,
    regionBits: count,
  })
  .refine((r) => r.slotBits === r.indexBits + r.latBits + r.lonBits, { error: 'record: expected slotBits = indexBits + latBits + lonBits' })
  .refine((r) => r.regionBits === r.slotBits * r.slotsPerRegion, { error: 'record: expected regionBits = slotBits * slotsPerRegion' });

/**
 * How the server answers this matrix (core/pir/answer-plan.ts), recorded with the build: the
 * products one answer costs with this plan and with the plain one, so the choice explains itself.
 */
const products = z.number().int().min(0);
/** Every plan the build weighed, e.g. { plan: 'blocked b=6', products: 86015 }: the reason for the choice. */
const weighed = z.array(z.object({ plan: z.string(), products })).optional();
export const PlanRecordSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('plain'), products, plainProducts: products, weighed }),
  z.object({ kind: z.literal('blocked'), blockColumns: z.number().int().min(1).max(12), products, plainProducts: products, weighed }),
  // The rules are mined again from the stored matrix by the server (mining is deterministic).
  z.object({ kind: z.literal('mined'), rules: z.number().int().min(0), products, plainProducts: products, weighed }),
]);
export type PlanRecord = z.infer<typeof PlanRecordSchema>;

const sha256 = z.string().regex(/^[0-9a-f]{64}$/);

/**
 * The private details of a version (core/details/DETAILS.md): the sealed file every client
 * downloads whole, and the details matrix of record keys a second private query reads.
 */
export const DetailsSchema = z
  .object({
    columns: z.array(z.string().min(1)),
    recordBytes: count,
    sealedRecordBytes: count,
    sealedHash: sha256,
    sealedBytes: count,
    keyBits: z.literal(128),
    keysPerColumn: z.number().int().min(1).max(16),
    matrix: z.object({ contentHash: sha256, rows: count, columns: count, ones: z.number().int().min(0), plan: PlanRecordSchema }),
  })
  .refine((d) => d.sealedRecordBytes === d.recordBytes + 16, { error: 'details: expected sealedRecordBytes = recordBytes + 16' })
  .refine((d) => d.matrix.rows === d.keysPerColumn * d.keyBits, { error: 'details: expected matrix.rows = keysPerColumn * keyBits' });
export type Details = z.infer<typeof DetailsSchema>;
/**
 * The partition matrix of a veiled layout: one padded record per coarse cell, cellsPerColumn
 * records stacked in a column (like regions in the cell matrix). Stored content-addressed.
 */
export const PartitionMatrixSchema = z.object({
  rows: count,
  columns: count,
  cellsPerColumn: count,
  ones: z.number().int().min(0),
  plan: PlanRecordSchema,
  contentHash: z.string().regex(/^[0-9a-f]{64}$/),
});
export type PartitionMatrix = z.infer<typeof PartitionMatrixSchema>;

export const ManifestSchema = z
  .object({
    format: z.literal('nearveil-manifest'),
    formatVersion: z.literal(1),
    dataset: z.string().min(1),
    version: z.number().int().min(1),
    siteCount: count,
    contentHash: sha256,
    modulusBits: z.array(z.union([z.literal(2048), z.literal(3072)])).min(1),
    layout: LayoutSchema,
    /** Largest k the candidate lists serve (k nearest); absent in older manifests, meaning 1. */
    maxK: z.number().int().min(1).max(MAX_K).default(1),
    record: RecordSchema,
    matrix: z.object({ rows: count, columns: count, regionsPerColumn: count, ones: z.number().int().min(0), plan: PlanRecordSchema }),
    siteIds: z.array(z.string().min(1)),
    /** Absent on versions built without details (before they existed, or by `nearveil plan`). */
    details: DetailsSchema.optional(),
    partition: PartitionMatrixSchema.optional(),
    /** Adaptive layouts only (the others' boxes are in their layout); absent in older manifests. */
    coverage: CoverageSchema.optional(),
  })
  .refine((m) => m.siteIds.length === m.siteCount, { error: 'manifest: expected one site id per site' })
  .refine((m) => 2 ** m.record.indexBits >= m.siteCount + 1, { error: 'manifest: expected indexBits to hold site index + 1' })
  .refine((m) => m.matrix.rows === m.matrix.regionsPerColumn * m.record.regionBits, {
    error: 'manifest: expected matrix.rows = regionsPerColumn * regionBits',
  })
  .refine((m) => m.matrix.columns === Math.ceil(regionCount(m.layout) / m.matrix.regionsPerColumn), {
    error: 'manifest: expected matrix.columns = ceil(regions / regionsPerColumn)',
  })
  .refine((m) => !m.details || m.details.matrix.columns === Math.ceil(m.siteCount / m.details.keysPerColumn), {
    error: 'manifest: expected details.matrix.columns = ceil(siteCount / keysPerColumn)',
  })
  .refine((m) => !m.details || m.details.sealedBytes === 12 + m.siteCount * m.details.sealedRecordBytes, {
    error: 'manifest: expected details.sealedBytes = 12 + siteCount * sealedRecordBytes',
  })
  .refine((m) => m.coverage === undefined || m.layout.kind === 'kd', { error: 'manifest: expected coverage only on an adaptive (kd) layout' })
  .refine((m) => (m.layout.kind === 'veiled') === (m.partition !== undefined), {
    error: 'manifest: expected a partition matrix exactly when the layout is veiled',
  })
  .refine((m) => m.layout.kind !== 'veiled' || !m.partition || m.partition.rows === m.partition.cellsPerColumn * m.layout.partitionBits, {
    error: 'manifest: expected partition.rows = cellsPerColumn * partitionBits',
  })
  .refine((m) => m.layout.kind !== 'veiled' || !m.partition || m.partition.columns === Math.ceil(coarseCellCount(m.layout) / m.partition.cellsPerColumn), {
    error: 'manifest: expected partition.columns = ceil(coarse cells / cellsPerColumn)',
  });

export type Manifest = z.infer<typeof ManifestSchema>;

