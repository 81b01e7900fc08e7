import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import type { WorkerBuildFigures } from '../../../scripts/bench-clustered.ts';
import { clusteredTownsCsv } from '../../../scripts/demo/clustered-towns.ts';

/**
 * A build must fit a Worker isolate (128 MB): the issue's budget is 100 MB of heap plus array
 * buffers for 100,000 sites with details. The child runs the Worker's build path with V8's heap
 * capped (old space 40 MB, young space 3 x 2 MB semi-spaces: 46 MB at most), so it dies if the
 * build needs more; its array buffers, outside that cap, are sampled at every checkpoint. Buffers
 * the build has dropped count until a collection frees them, which V8 times as it likes: one run
 * in three saw 15 MB of them (a 41 MB peak against 26 MB), so the heap cap leaves room for that.
 * The child reads the table as CSV text from a file, as the Worker reads it from R2.
 */
const HEAP_FLAGS = ['--max-old-space-size=40', '--max-semi-space-size=2'];
const HEAP_CAP_MB = 40 + 3 * 2;
const BUDGET_MB = 100;

function buildInChild(count: number, spanDeg: number) {
  const child = fileURLToPath(new URL('../../../scripts/worker-build-child.ts', import.meta.url));
  const dir = mkdtempSync(join(tmpdir(), 'nearveil-isolate-'));
  try {
    const csvFile = join(dir, 'towns.csv');
    writeFileSync(csvFile, clusteredTownsCsv(count, { spanDeg }));
    const run = spawnSync(process.execPath, [...HEAP_FLAGS, '--import', 'tsx', child, csvFile], { encoding: 'utf8', timeout: 240_000 });
    expect(run.status, `the build died (heap capped at ${HEAP_CAP_MB} MB): ${run.stderr.slice(-600)}`).toBe(0);
    return JSON.parse(run.stdout.trim().split('\n').pop()!) as WorkerBuildFigures;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

describe('a 100,000-site build with details fits an isolate (invented clustered tables)', () => {
  it.each([
    ['120 towns over 4 degrees (adaptive)', 4],
    ['120 towns crowded into 1 degree', 1],
  ])('%s: within 100 MB of heap plus array buffers', (_label, spanDeg) => {
    const seen = buildInChild(100_000, spanDeg);
    expect(seen.sites).toBe(100_000);
    expect(seen.hasDetails).toBe(true);
    const arrayBuffersMB = seen.peakArrayBuffers / 2 ** 20;
    console.log(`100,000 sites, span ${spanDeg} deg: ${seen.layout}, ${seen.seconds.toFixed(1)} s, heap used up to ${(seen.peakHeapUsed / 2 ** 20).toFixed(0)} MB (cap ${HEAP_CAP_MB}), array buffers up to ${arrayBuffersMB.toFixed(0)} MB (at ${seen.peakStage})`);
    expect(HEAP_CAP_MB + arrayBuffersMB).toBeLessThanOrEqual(BUDGET_MB);
  });
});
