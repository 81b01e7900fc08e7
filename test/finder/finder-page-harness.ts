import { readFileSync } from 'node:fs';
import { createServer, request as httpRequest, type IncomingHttpHeaders, type Server } from 'node:http';
import { extname, join } from 'node:path';
import { build } from 'vite';
import { renderFinderPage, type FinderPageConfig } from '../../api/finder/finder-html.ts';
import { ROOT } from '../product-server.ts';

/** Where `npx vite build --config finder/vite.config.ts` writes the page's script and stylesheet. */
export const FINDER_BUILD = join(ROOT, '.console-build', 'finder');

/** Builds the finder page's files as the product build does (finder/vite.config.ts). */
export async function buildFinder(): Promise<void> {
  await build({ configFile: join(ROOT, 'finder', 'vite.config.ts'), logLevel: 'warn' });
}

/** One request as it crossed the harness: what the network would carry. */
export interface SeenRequest {
  method: string;
  url: string;
  headers: IncomingHttpHeaders;
  body: Buffer;
}

export interface FinderSite {
  origin: string;
  /** Every /v1 request the page made, with its body, in order. */
  apiRequests: SeenRequest[];
  close(): Promise<void>;
}

// The Worker will send this policy with the page (the lead's route); sent here too, so a script or
// style the policy would block fails in the test as it would in production.
const CSP = "default-src 'self'";
const TYPES: Record<string, string> = { '.js': 'text/javascript; charset=utf-8', '.css': 'text/css; charset=utf-8', '.map': 'application/json' };

/**
 * A stand-in for the Worker's finder route on a free 127.0.0.1 port: `/find/x/<name>` answers
 * renderFinderPage(pages[name]), `/finder/*` the built files, `/test-tools/axe.min.js` axe-core
 * (npm; same-origin so the CSP lets it load), and `/v1/*` is passed to the product untouched, so
 * the page and the API share one origin as they will when the Worker serves both.
 */
export async function startFinderSite(productBase: string, pages: Record<string, FinderPageConfig>): Promise<FinderSite> {
  const apiRequests: SeenRequest[] = [];
  const product = new URL(productBase);
  const server: Server = createServer((req, res) => {
    const path = new URL(req.url ?? '/', 'http://x').pathname;
    const page = /^\/find\/x\/([a-z0-9-]+)$/.exec(path);
    if (req.method === 'GET' && page && pages[page[1]!]) {
      res.writeHead(200, { 'content-type': 'text/html; charset=utf-8', 'content-security-policy': CSP, 'cache-control': 'no-store' }).end(renderFinderPage(pages[page[1]!]!));
      return;
    }
    const file = /^\/finder\/(finder\.(js|css|js\.map))$/.exec(path);
    if (req.method === 'GET' && (file || path === '/test-tools/axe.min.js')) {
      const where = file ? join(FINDER_BUILD, file[1]!) : join(ROOT, 'node_modules', 'axe-core', 'axe.min.js');
      res.writeHead(200, { 'content-type': TYPES[extname(where)] ?? 'application/octet-stream', 'cache-control': 'no-store' }).end(readFileSync(where));
      return;
    }
    if (path.startsWith('/v1/')) {
      const chunks: Buffer[] = [];
      req.on('data', (chunk: Buffer) => chunks.push(chunk));
      req.on('end', () => {
        const body = Buffer.concat(chunks);
        apiRequests.push({ method: req.method ?? 'GET', url: req.url ?? '', headers: req.headers, body });
        const upstream = httpRequest(
          { host: product.hostname, port: product.port, method: req.method, path: req.url, headers: { ...req.headers, host: product.host } },
          (answer) => {
            res.writeHead(answer.statusCode ?? 502, answer.headers);
            answer.pipe(res);
          },
        );
        upstream.on('error', (err) => res.writeHead(502, { 'content-type': 'text/plain' }).end(`proxy: ${err.message}`));
        upstream.end(body);
      });
      return;
    }
    res.writeHead(404, { 'content-type': 'text/plain' }).end('not found');
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address() as { port: number };
  return {
    origin: `http://127.0.0.1:${port}`,
    apiRequests,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

/** Great-circle distance by the haversine formula (common practice), on a sphere of 6371 km: the test's own reference. */
export function haversineMeters(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const a = Math.sin(((lat2 - lat1) * rad) / 2) ** 2 + Math.cos(lat1 * rad) * Math.cos(lat2 * rad) * Math.sin(((lon2 - lon1) * rad) / 2) ** 2;
  return 2 * 6_371_000 * Math.asin(Math.min(1, Math.sqrt(a)));
}

/** The ids of the k sites nearest to a point, by brute force over every site. */
export function bruteForceNearest(sites: ReadonlyArray<{ id: string; lat: number; lon: number }>, lat: number, lon: number, k: number): string[] {
  return sites
    .map((s) => ({ id: s.id, d: haversineMeters(lat, lon, s.lat, s.lon) }))
    .sort((a, b) => a.d - b.d)
    .slice(0, k)
    .map((s) => s.id);
}

/**
 * The byte patterns a position could travel as: decimal text at 2 to 7 places and as JavaScript
 * prints it, and IEEE 754 binary64 and binary32 in both byte orders.
 */
export function positionPatterns(value: number): Array<{ label: string; bytes: Buffer }> {
  const texts = new Set([String(value), ...[2, 3, 4, 5, 6, 7].map((places) => value.toFixed(places))]);
  const out = [...texts].map((text) => ({ label: `text ${text}`, bytes: Buffer.from(text) }));
  const f64 = Buffer.alloc(8);
  f64.writeDoubleBE(value);
  out.push({ label: 'float64 BE', bytes: Buffer.from(f64) });
  f64.writeDoubleLE(value);
  out.push({ label: 'float64 LE', bytes: Buffer.from(f64) });
  const f32 = Buffer.alloc(4);
  f32.writeFloatBE(value);
  out.push({ label: 'float32 BE', bytes: Buffer.from(f32) });
  f32.writeFloatLE(value);
  out.push({ label: 'float32 LE', bytes: Buffer.from(f32) });
  return out;
}
