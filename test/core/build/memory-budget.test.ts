import { describe, expect, it } from 'vitest';
import { buildVersion } from '../../../core/build/build-version.ts';
import { InputError } from '../../../core/errors/input-error.ts';
import type { Site } from '../../../core/geo/site-table.ts';
import { answerMemory, planShapeOf } from '../../../core/pir/answer-memory.ts';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';

// Invented demo-style data: 600 sites in three dense clusters and a sparse spread.
function clusteredSites(): Site[] {
  const random = seededRandom(41);
  const centres = [[52.1, 4.3], [48.8, 2.4], [45.4, 9.2]] as const;
  return Array.from({ length: 600 }, (_, i) => {
    const [lat, lon] = i % 4 === 3 ? [40 + random() * 15, -5 + random() * 20] : centres[i % 3]!;
    const spread = i % 4 === 3 ? 0 : 0.05;
    return { id: `s${i}`, name: null, lat: lat + (random() - 0.5) * spread, lon: lon + (random() - 0.5) * spread, details: {} };
  });
}

const least = (rows: number, columns: number) => answerMemory(rows, columns, { kind: 'blocked', blockColumns: 2 }, 3072).peakBytes;

describe('build memory budget', () => {
  it('keeps the chosen layout and plan within the budget, falling back to the cheapest layout that fits', async () => {
    const table = { sites: clusteredSites(), detailColumns: [] };
    const free = await buildVersion(table, { dataset: 'budget', version: 1, memoryBudgetBytes: 2 ** 40 });
    const needs = free.layoutsTried.map((l) => least(l.cost.rows, l.cost.columns));
    const chosenNeeds = needs[free.layoutsTried.findIndex((l) => l.chosen)]!;
    const smaller = needs.filter((b) => b < chosenNeeds);
    expect(smaller.length).toBeGreaterThan(0); // the data has a layout lighter than the cheapest one
    const budget = Math.max(...smaller);
    const tight = await buildVersion(table, { dataset: 'budget', version: 1, memoryBudgetBytes: budget });
    const chosen = tight.layoutsTried.find((l) => l.chosen)!;
    expect(least(chosen.cost.rows, chosen.cost.columns)).toBeLessThanOrEqual(budget);
    const fitting = tight.layoutsTried.filter((l) => least(l.cost.rows, l.cost.columns) <= budget);
    expect(chosen.cost.seconds.total).toBe(Math.min(...fitting.map((l) => l.cost.seconds.total)));
    const m = tight.manifest.matrix;
    expect(answerMemory(m.rows, m.columns, planShapeOf(m.plan), 3072).peakBytes).toBeLessThanOrEqual(budget);
  });

  it('refuses a layout asked for by name that a Worker could not answer from', async () => {
    const table = { sites: clusteredSites(), detailColumns: [] };
    const err = await buildVersion(table, { dataset: 'budget', version: 1, layout: 'grid', memoryBudgetBytes: 1024 }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err).toMatchObject({ code: 'matrix_too_large', field: 'layout' });
    expect((err as Error).message).toMatch(/^no grid layout fits: the smallest, grid \d+ x \d+, needs (at least )?a \d+ x \d+ matrix/);
    expect((err as Error).message).toMatch(/build with layout auto or adaptive/);
  });

  it('names the layouts that would fit, with their cost, when the others were weighed too (nearveil plan)', async () => {
    const table = { sites: clusteredSites(), detailColumns: [] };
    const free = await buildVersion(table, { dataset: 'budget', version: 1, memoryBudgetBytes: 2 ** 40, weighAll: true });
    const adaptiveBytes = Math.min(...free.layoutsTried.filter((l) => l.kind === 'kd').map((l) => l.answerBytes));
    const gridBytes = Math.min(...free.layoutsTried.filter((l) => l.kind === 'grid').map((l) => l.answerBytes));
    expect(adaptiveBytes).toBeLessThan(gridBytes);
    const err = await buildVersion(table, { dataset: 'budget', version: 1, layout: 'grid', weighAll: true, memoryBudgetBytes: adaptiveBytes }).catch((e: unknown) => e);
    expect((err as Error).message).toMatch(/adaptive, lists <= \d+ fits \(\d+ x \d+, \d+ MiB, \d+ KiB up and \d+ KiB down per query\)/);
  });

  it('plan and build agree: weighing every kind never changes what auto picks, and auto never picks veiled', async () => {
    const table = { sites: clusteredSites(), detailColumns: [] };
    const free = await buildVersion(table, { dataset: 'budget', version: 1, memoryBudgetBytes: 2 ** 40 });
    // A budget under the cheapest layout: the next cheapest that fits must be taken, by both.
    for (const budget of [2 ** 40, free.layoutsTried.find((l) => l.chosen)!.answerBytes - 1]) {
      const build = await buildVersion(table, { dataset: 'budget', version: 1, memoryBudgetBytes: budget });
      const plan = await buildVersion(table, { dataset: 'budget', version: 1, memoryBudgetBytes: budget, weighAll: true });
      expect(plan.manifest.contentHash).toBe(build.manifest.contentHash);
      const chosen = plan.layoutsTried.find((l) => l.chosen)!;
      expect(chosen.kind).not.toBe('veiled');
      expect(chosen.verdict).toBe('chosen');
      for (const l of plan.layoutsTried.filter((x) => !x.chosen)) {
        // Every other layout says why: too large, costlier, or not asked for (veiled under auto).
        if (l.answerBytes > budget) expect(l.verdict).toBe('too_large');
        else if (l.kind === 'veiled') expect(l.verdict).toBe('not_asked');
        else expect([l.verdict, l.cost.seconds.total >= chosen.cost.seconds.total]).toEqual(['costlier', true]);
      }
    }
  });
});
