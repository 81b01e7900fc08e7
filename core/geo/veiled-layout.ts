import { readBits } from './record.ts';
import { widestLongitudeGap } from './bounding-box.ts';

/**
 * The veiled layout: regions as fine as the adaptive layout's, but the public manifest shows only
 * a coarse grid. Each coarse cell holds its own kd partition (cell-partition.ts); the partitions
 * are stored, one padded record per cell, in a second bit matrix, the *partition matrix*. A
 * client first fetches its coarse cell's record in a private query, then finds its region in it
 * and fetches the region's candidate list from the cell matrix in a second private query.
 *
 * Coarse grid: the whole-degree box around the sites, split into rows x cols equal cells, plus
 * bands that cover the rest of the sphere: a south band [-90, latMin] when latMin > -90, a north
 * band [latMax, 90] when latMax < 90, and a gap column [lonMax, lonMin + 360] when the box is not
 * the whole circle. So every point of the Earth lies in a coarse cell, and every coarse cell is a
 * closed latitude/longitude box. Longitudes are read as offsets east of lonMin, modulo 360.
 * Coarse cells are numbered row-major, from the southernmost row and from lonMin eastward.
 *
 * A cell's record, most significant bit first: the global number of its first region
 * (offsetBits), then its kd-tree in preorder: 0 for a leaf; 1, the axis (0 latitude, 1 longitude
 * offset) and splitBits bits m for an inner node, which splits its box at
 * lo + (hi - lo) * (m + 1) / (2^splitBits + 1). Zero bits pad every record to partitionBits.
 * Region = first region of the cell + the leaf's preorder number in the cell.
 *
 * Public: the box (whole degrees), rows, cols, splitBits and the padded sizes and totals
 * (offsetBits, partitionBits, regions). Nothing of the partitions themselves.
 */
export interface VeiledLayout {
  readonly kind: 'veiled';
  readonly latMin: number;
  readonly latMax: number;
  readonly lonMin: number;
  readonly lonMax: number;
  readonly rows: number;
  readonly cols: number;
  readonly splitBits: number;
  readonly offsetBits: number;
  readonly partitionBits: number;
  readonly regions: number;
}

/** A coarse cell or kd box: latitudes in degrees, longitudes as offsets east of lonMin, in [0, 360]. */
export interface CellBox {
  readonly latMin: number;
  readonly latMax: number;
  readonly offMin: number;
  readonly offMax: number;
}

/** A parsed record: the cell's first region and its tree (preorder; [axis, m] or null for a leaf). */
export interface PartitionRecord {
  readonly offset: number;
  readonly nodes: ReadonlyArray<readonly [0 | 1, number] | null>;
}

type CoarseGrid = Pick<VeiledLayout, 'latMin' | 'latMax' | 'lonMin' | 'lonMax' | 'rows' | 'cols'>;

/**
 * The whole-degree box around some positions: latitudes floored and ceiled, longitudes the
 * shortest arc holding them all (east of the widest gap), floored and ceiled. At least one degree
 * each way. Snapping to whole degrees discloses the sites' extent only to a degree.
 */
export function wholeDegreeBox(lats: ArrayLike<number>, lons: ArrayLike<number>): Pick<VeiledLayout, 'latMin' | 'latMax' | 'lonMin' | 'lonMax'> {
  if (lats.length < 1) throw new RangeError('wholeDegreeBox: expected at least one position, got 0');
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < lats.length; i++) {
    lo = Math.min(lo, lats[i]!);
    hi = Math.max(hi, lats[i]!);
  }
  let latMin = Math.floor(lo);
  let latMax = Math.ceil(hi);
  if (latMax === latMin) latMax < 90 ? latMax++ : latMin--;
  const { start, gap } = widestLongitudeGap(lons);
  const lonMin = Math.floor(start);
  let lonMax = Math.ceil(start + (360 - gap));
  if (lonMax === lonMin) lonMax++;
  if (lonMax - lonMin >= 360) return { latMin, latMax, lonMin: -180, lonMax: 180 };
  return { latMin, latMax, lonMin, lonMax };
}

/** Rows and columns of coarse cells, bands included. */
export function coarseShape(g: CoarseGrid): { rows: number; cols: number; south: number; gap: number } {
  const south = g.latMin > -90 ? 1 : 0;
  const north = g.latMax < 90 ? 1 : 0;
  const gap = g.lonMax - g.lonMin < 360 ? 1 : 0;
  return { rows: south + g.rows + north, cols: g.cols + gap, south, gap };
}

export function coarseCellCount(g: CoarseGrid): number {
  const s = coarseShape(g);
  return s.rows * s.cols;
}

/** Longitude offset east of lonMin, in [0, 360). */
export function lonOffset(g: Pick<VeiledLayout, 'lonMin'>, lon: number): number {
  return (((lon - g.lonMin) % 360) + 360) % 360;
}

function rowEdges(g: CoarseGrid, row: number): [number, number] {
  const s = coarseShape(g);
  const i = row - s.south;
  if (i < 0) return [-90, g.latMin];
  if (i >= g.rows) return [g.latMax, 90];
  const at = (k: number) => (k === g.rows ? g.latMax : g.latMin + ((g.latMax - g.latMin) * k) / g.rows);
  return [at(i), at(i + 1)];
}

function colEdges(g: CoarseGrid, col: number): [number, number] {
  const span = g.lonMax - g.lonMin;
  if (col >= g.cols) return [span, 360];
  const at = (k: number) => (k === g.cols ? span : (span * k) / g.cols);
  return [at(col), at(col + 1)];
}

/** The closed box of coarse cell `cell`. */
export function coarseCellBox(g: CoarseGrid, cell: number): CellBox {
  const s = coarseShape(g);
  if (!Number.isSafeInteger(cell) || cell < 0 || cell >= s.rows * s.cols) {
    throw new RangeError(`coarseCellBox: expected a cell in [0, ${s.rows * s.cols}), got ${cell}`);
  }
  const [latMin, latMax] = rowEdges(g, Math.floor(cell / s.cols));
  const [offMin, offMax] = colEdges(g, cell % s.cols);
  return { latMin, latMax, offMin, offMax };
}

/**
 * The coarse cell of a point (degrees; callers check ranges). A point on a shared edge goes to
 * one of the cells beside it; lists are built for closed boxes, so either is sound.
 */
export function coarseCellOf(g: CoarseGrid, lat: number, lon: number): number {
  const s = coarseShape(g);
  let row: number;
  if (lat < g.latMin) row = 0;
  else if (lat > g.latMax) row = s.rows - 1;
  else row = s.south + Math.min(g.rows - 1, Math.floor(((lat - g.latMin) / (g.latMax - g.latMin)) * g.rows));
  const span = g.lonMax - g.lonMin;
  const off = lonOffset(g, lon);
  const col = off > span ? g.cols : Math.min(g.cols - 1, Math.floor((off / span) * g.cols));
  return row * s.cols + col;
}

/** Where a split of [lo, hi] with code m lies (the same arithmetic on build and client). */
export function splitValue(lo: number, hi: number, m: number, splitBits: number): number {
  return lo + ((hi - lo) * (m + 1)) / (2 ** splitBits + 1);
}

/** Bits of a record whose tree has these nodes: 1 per leaf, 2 + splitBits per inner node. */
export function recordBits(nodes: ReadonlyArray<unknown>, offsetBits: number, splitBits: number): number {
  let bits = offsetBits;
  for (const n of nodes) bits += n === null ? 1 : 2 + splitBits;
  return bits;
}

/** Writes a record through put(offset, 1) (only 1-bits; the target starts zero). */
export function writeRecord(put: (at: number) => void, record: PartitionRecord, offsetBits: number, splitBits: number): number {
  let at = 0;
  const write = (bits: number, value: number) => {
    for (let b = 0; b < bits; b++) if ((value >>> (bits - 1 - b)) & 1) put(at + b);
    at += bits;
  };
  write(offsetBits, record.offset);
  for (const node of record.nodes) {
    if (node === null) {
      write(1, 0);
      continue;
    }
    write(1, 1);
    write(1, node[0]);
    write(splitBits, node[1]);
  }
  return at;
}

/**
 * Parses a record from partitionBits 0/1 bytes. Throws RangeError when the bits do not hold one
 * complete tree (a corrupted or mismatched answer) or name a region beyond the total.
 */
export function readRecord(layout: VeiledLayout, bits: Uint8Array): PartitionRecord {
  if (!(bits instanceof Uint8Array) || bits.length !== layout.partitionBits) {
    throw new RangeError(`readRecord: expected ${layout.partitionBits} bits, got ${bits?.length}`);
  }
  const offset = readBits(bits, 0, layout.offsetBits);
  const nodes: Array<[0 | 1, number] | null> = [];
  let at = layout.offsetBits;
  let open = 1;
  while (open > 0) {
    if (at >= bits.length) throw new RangeError('readRecord: expected a complete tree, the record ended inside it');
    if (bits[at++] === 0) {
      nodes.push(null);
      open--;
      continue;
    }
    if (at + 1 + layout.splitBits > bits.length) throw new RangeError('readRecord: expected a complete tree, the record ended inside a split');
    const axis = bits[at++] as 0 | 1;
    nodes.push([axis, readBits(bits, at, layout.splitBits)]);
    at += layout.splitBits;
    open++;
  }
  const leaves = nodes.filter((n) => n === null).length;
  if (offset + leaves > layout.regions) {
    throw new RangeError(`readRecord: expected regions below ${layout.regions}, got ${offset} + ${leaves} leaves`);
  }
  return { offset, nodes };
}

/** The region of a point inside its coarse cell's partition (the record of that cell). */
export function partitionRegion(layout: VeiledLayout, cell: number, record: PartitionRecord, lat: number, lon: number): number {
  let box = coarseCellBox(layout, cell);
  const off = lonOffset(layout, lon);
  const nodes = record.nodes;
  let i = 0;
  let leaf = 0;
  while (nodes[i] !== null) {
    const [axis, m] = nodes[i]!;
    const [lo, hi] = axis === 0 ? [box.latMin, box.latMax] : [box.offMin, box.offMax];
    const value = splitValue(lo, hi, m, layout.splitBits);
    if ((axis === 0 ? lat : off) < value) {
      box = axis === 0 ? { ...box, latMax: value } : { ...box, offMax: value };
      i++;
      continue;
    }
    box = axis === 0 ? { ...box, latMin: value } : { ...box, offMin: value };
    // Skip the left subtree, counting its leaves.
    let open = 1;
    i++;
    while (open > 0) {
      if (nodes[i] === null) {
        open--;
        leaf++;
      } else open++;
      i++;
    }
  }
  return record.offset + leaf;
}
