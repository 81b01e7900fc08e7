// `npm run bench`, real-sized tables: invented sites clustered around 120 towns (the shape of a
// national list), built by the Worker's build path in a Node child (scripts/worker-build-child.ts)
// so each size is measured alone: wall and CPU seconds, peak heap and array buffers, the layout
// chosen and what one query then costs.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

export interface WorkerBuildFigures {
  sites: number;
  layout: string;
  seconds: number;
  cpuSeconds: number;
  peakArrayBuffers: number;
  /** Build stage at which the array buffers peaked. */
  peakStage: string;
  peakHeapUsed: number;
  hasDetails: boolean;
  matrix: { rows: number; columns: number; products: number; plan: string };
  bytesUp: number;
  bytesDown: number;
  detailsProducts: number;
}

/** One build in a child process (its own heap); `heapMB` caps V8's old space as an isolate would. */
export function workerBuild(count: number, spanDeg = 4, heapMB?: number): WorkerBuildFigures {
  const child = fileURLToPath(new URL('./worker-build-child.ts', import.meta.url));
  const flags = heapMB === undefined ? [] : [`--max-old-space-size=${heapMB}`, '--max-semi-space-size=2'];
  const run = spawnSync(process.execPath, [...flags, '--import', 'tsx', child, String(count), String(spanDeg)], { encoding: 'utf8', timeout: 600_000 });
  if (run.status !== 0) throw new Error(`the build of ${count} sites failed: ${run.stderr.slice(-500)}`);
  return JSON.parse(run.stdout.trim().split('\n').pop()!) as WorkerBuildFigures;
}

export function formatWorkerBuilds(rows: WorkerBuildFigures[]): string {
  const mb = (b: number) => (b / 2 ** 20).toFixed(0);
  return [
    'sites     layout                  wall s  cpu s  heap MB  buffers MB  matrix R x C    KiB up  KiB down  products (plan)      details products',
    ...rows.map(
      (r) =>
        `${r.sites.toLocaleString('en-GB').padEnd(9)} ${r.layout.padEnd(22)} ${r.seconds.toFixed(1).padStart(7)} ${r.cpuSeconds.toFixed(1).padStart(6)} ${mb(r.peakHeapUsed).padStart(8)} ${mb(r.peakArrayBuffers).padStart(11)}  ${`${r.matrix.rows} x ${r.matrix.columns}`.padEnd(14)} ${(r.bytesUp / 1024).toFixed(0).padStart(7)} ${(r.bytesDown / 1024).toFixed(0).padStart(9)}  ${`${r.matrix.products} (${r.matrix.plan})`.padEnd(20)} ${r.detailsProducts}`,
    ),
  ].join('\n');
}
