// Run by isolate-memory.test.ts in a Node child with a small heap: the Worker's build path
// (readSiteColumns, then buildFromColumns with its details stored at once and a pause at every
// checkpoint) on an invented table, printing one JSON line with what it saw.
import { buildFromColumns } from '../../../core/build/build-version.ts';
import { readSiteColumns } from '../../../core/build/site-columns.ts';
import { clusteredTownsCsv } from '../../../scripts/demo/clustered-towns.ts';

const [count, spanDeg] = process.argv.slice(2).map(Number);
let peakArrayBuffers = 0;
let peakHeapUsed = 0;
const sample = () => {
  const m = process.memoryUsage();
  peakArrayBuffers = Math.max(peakArrayBuffers, m.arrayBuffers);
  peakHeapUsed = Math.max(peakHeapUsed, m.heapUsed);
};
let csv: string | null = clusteredTownsCsv(count!, { spanDeg: spanDeg! });
const sites = readSiteColumns(csv);
csv = null;
sample();
const started = performance.now();
const built = await buildFromColumns(
  sites,
  { dataset: 'isolate', version: 1, detailsSecret: new Uint8Array(32).fill(7) },
  { onProgress: sample, pause: () => new Promise<void>((resolve) => setImmediate(resolve)), storeDetails: async () => sample() },
);
sample();
console.log(JSON.stringify({ sites: built.manifest.siteCount, layout: built.manifest.layout.kind, seconds: (performance.now() - started) / 1000, peakArrayBuffers, peakHeapUsed, hasDetails: built.manifest.details !== undefined }));
