// `npm run bench`, one query end to end through the Worker: the product started as `npm start`
// starts it (wrangler dev, local D1 and R2, loopback), a dataset imported and published, then
// private queries posted as the SDK posts them. Reports the server's own time by phase (its
// Server-Timing header) and the wall time from the request's bytes going out to the answer's
// bytes all in, each the median of the queries.
import { startProduct } from '../test/product-server.ts';
import { connectAdmin } from '../sdk/admin.ts';
import { readDevCredentials } from '../sdk/cli/dev-home.ts';
import { connect } from '../sdk/client.ts';
import { ManifestSchema } from '../core/geo/manifest.ts';
import { generateKeyPair } from '../core/pir/keys.ts';
import { makeQuery } from '../core/pir/query.ts';
import { encodeQuery } from '../core/pir/wire.ts';

export interface WorkerQueryRow {
  dataset: string;
  rows: number;
  columns: number;
  /** Median of the queries: Server-Timing metrics by name (the first is the whole server time). */
  serverMs: Record<string, number>;
  wallMs: number;
  bytesUp: number;
  bytesDown: number;
}

/** Imports each table (the demo is seeded by the start itself), then times `queries` queries on each. */
export async function queriesThroughWorker(tables: Array<{ dataset: string; csv?: string }>, queries = 5): Promise<WorkerQueryRow[]> {
  const product = await startProduct('bench');
  try {
    const credentials = readDevCredentials(product.env.NEARVEIL_HOME!);
    const admin = connectAdmin({ endpoint: product.base, token: credentials.adminToken! });
    const key = await generateKeyPair({ modulusBits: 2048 });
    // The SDK proves and registers the key on its first query.
    const client = connect({ endpoint: product.base, apiKey: credentials.apiKey!, keyPair: key });
    const rows: WorkerQueryRow[] = [];
    for (const table of tables) {
      if (table.csv !== undefined) {
        await admin.ensureDataset(table.dataset);
        const { version } = await admin.uploadSiteTable(table.dataset, table.csv);
        await admin.build(table.dataset, version);
        await admin.publish(table.dataset, version);
      }
      await client.nearest(table.dataset, { lat: 0, lon: 0 });
      const manifestRes = await fetch(`${product.base}/v1/datasets/${table.dataset}/manifest`, { headers: { authorization: `Bearer ${credentials.apiKey}` } });
      const manifest = ManifestSchema.parse(await manifestRes.json());
      const runs: Array<{ server: Record<string, number>; wall: number; up: number; down: number }> = [];
      for (let i = 0; i < queries + 1; i++) {
        const body = encodeQuery(key.n, makeQuery(key, manifest.matrix.columns, i % manifest.matrix.columns));
        const started = performance.now();
        const res = await fetch(`${product.base}/v1/datasets/${table.dataset}/versions/${manifest.version}/query`, {
          method: 'POST',
          headers: { authorization: `Bearer ${credentials.apiKey}`, 'content-type': 'application/octet-stream' },
          body,
        });
        const answer = new Uint8Array(await res.arrayBuffer());
        const wall = performance.now() - started;
        if (res.status !== 200) throw new Error(`bench: query on ${table.dataset} answered ${res.status}`);
        const server = Object.fromEntries([...(res.headers.get('server-timing') ?? '').matchAll(/([\w-]+);dur=([\d.]+)/g)].map((m) => [m[1]!, Number(m[2])]));
        if (i > 0) runs.push({ server, wall, up: body.length, down: answer.length }); // the first warms the isolate's caches
      }
      const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;
      const names = Object.keys(runs[0]!.server);
      rows.push({
        dataset: table.dataset,
        rows: manifest.matrix.rows,
        columns: manifest.matrix.columns,
        serverMs: Object.fromEntries(names.map((name) => [name, median(runs.map((r) => r.server[name] ?? 0))])),
        wallMs: median(runs.map((r) => r.wall)),
        bytesUp: runs[0]!.up,
        bytesDown: runs[0]!.down,
      });
    }
    return rows;
  } finally {
    await product.stop();
  }
}

export function formatWorkerQueries(rows: WorkerQueryRow[], plainMs: (dataset: string) => number | undefined): string {
  const lines = ['dataset                     R x C          server ms (phases)                                                 wall ms   plain ms  ratio'];
  for (const r of rows) {
    const [total, ...phases] = Object.entries(r.serverMs);
    const plain = plainMs(r.dataset);
    lines.push(
      `${r.dataset.padEnd(27)} ${`${r.rows} x ${r.columns}`.padEnd(14)} ${total![1].toFixed(0).padStart(5)} (${phases.map(([n, v]) => `${n} ${v.toFixed(0)}`).join(', ')})`.padEnd(107) +
        ` ${r.wallMs.toFixed(0).padStart(6)}  ${plain === undefined ? '      -' : plain.toFixed(0).padStart(8)}  ${plain === undefined ? '' : `${(plain / r.wallMs).toFixed(1)}x`}`,
    );
  }
  return lines.join('\n');
}
