// Run in a Node child by test/core/build/isolate-memory.test.ts (with a small heap) and by the
// bench: the Worker's build path (readSiteColumns, then buildFromColumns with its details stored
// at once and a pause at every checkpoint) on an invented table of clustered towns, printing one
// JSON line with what it saw. Arguments: site count and span of the towns in degrees, or a CSV file.
import { readFileSync } from 'node:fs';
import { buildFromColumns } from '../core/build/build-version.ts';
import { readSiteColumns } from '../core/build/site-columns.ts';
import { shapeCost } from '../core/build/cost-model.ts';
import { clusteredTownsCsv } from './demo/clustered-towns.ts';

// A file of CSV text (as the Worker reads it from R2), or a count and a span to make one here.
const [first, second] = process.argv.slice(2);
const fromFile = first !== undefined && !/^\d+$/.test(first);
let peakArrayBuffers = 0;
let peakHeapUsed = 0;
let stage = 'reading';
let peakStage = stage;
const sample = () => {
  const m = process.memoryUsage();
  if (m.arrayBuffers > peakArrayBuffers) peakStage = stage;
  peakArrayBuffers = Math.max(peakArrayBuffers, m.arrayBuffers);
  peakHeapUsed = Math.max(peakHeapUsed, m.heapUsed);
};
let csv: string | null = fromFile ? readFileSync(first!, 'utf8') : clusteredTownsCsv(Number(first), { spanDeg: Number(second) });
const sites = readSiteColumns(csv);
csv = null;
sample();
const started = performance.now();
const cpu = process.cpuUsage();
const built = await buildFromColumns(
  sites,
  { dataset: 'isolate', version: 1, detailsSecret: new Uint8Array(32).fill(7) },
  { onProgress: (p) => { stage = p.stage; sample(); }, pause: () => new Promise<void>((resolve) => setImmediate(resolve)), storeDetails: async () => sample() },
);
sample();
const spent = process.cpuUsage(cpu);
const m = built.manifest.matrix;
const query = shapeCost(m.rows, m.columns, m.plan.products, built.manifest.record.regionBits);
console.log(
  JSON.stringify({
    sites: built.manifest.siteCount,
    layout: built.layoutsTried.find((l) => l.chosen)!.label,
    seconds: (performance.now() - started) / 1000,
    cpuSeconds: (spent.user + spent.system) / 1e6,
    peakArrayBuffers,
    peakStage,
    peakHeapUsed,
    hasDetails: built.manifest.details !== undefined,
    matrix: { rows: m.rows, columns: m.columns, products: m.plan.products, plan: m.plan.kind },
    bytesUp: query.bytesUp,
    bytesDown: query.bytesDown,
    detailsProducts: built.manifest.details?.matrix.plan.products ?? 0,
  }),
);
