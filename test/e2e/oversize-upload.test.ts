import { readFileSync } from 'node:fs';
import { request } from 'node:http';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startProduct, type ProductServer } from '../product-server.ts';

/**
 * A hostile upload through `npm start` (wrangler dev, real HTTP): a chunked body over the 32 MiB
 * site-table limit. Before, hono's bodyLimit gathered it in a doubling buffer past the isolate's
 * 128 MB and workerd restarted the Worker mid-request (503, 3 runs of 3).
 */
let product: ProductServer;

beforeAll(async () => {
  product = await startProduct('oversize');
}, 200_000);

afterAll(async () => {
  await product?.stop();
});

/** POSTs `mebibytes` MiB of 'A' with Transfer-Encoding: chunked (no Content-Length); resolves with status and body. */
function chunkedUpload(url: URL, token: string, mebibytes: number): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request(url, { method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'text/csv', 'transfer-encoding': 'chunked' } }, (res) => {
      let body = '';
      res.on('data', (d: Buffer) => (body += d.toString()));
      res.on('end', () => resolve({ status: res.statusCode!, body }));
    });
    // The server may stop reading once it has refused: what it answered is what counts.
    req.on('error', (err) => reject(err));
    const chunk = Buffer.alloc(1 << 20, 0x41);
    let sent = 0;
    const pump = (): void => {
      while (sent < mebibytes) {
        sent++;
        if (!req.write(chunk)) {
          req.once('drain', pump);
          return;
        }
      }
      req.end();
    };
    pump();
  });
}

describe('an oversize chunked upload through npm start', () => {
  it('gets a complete JSON 413 each time, and the server stays ready for the next request', async () => {
    const { adminToken } = JSON.parse(readFileSync(join(product.env.NEARVEIL_HOME!, 'dev-credentials.json'), 'utf8')) as { adminToken: string };
    const url = new URL(`${product.base}/v1/admin/datasets/harrow-vale-care/versions`);
    const before = (await (await fetch(`${product.base}/v1/admin/datasets/harrow-vale-care/versions`, { headers: { authorization: `Bearer ${adminToken}` } })).json()) as { versions: unknown[] };
    for (let round = 0; round < 2; round++) {
      const refused = await chunkedUpload(url, adminToken, 40);
      expect(refused.status, `round ${round}: ${refused.body}\n${product.log().slice(-4000)}`).toBe(413);
      expect(JSON.parse(refused.body)).toMatchObject({ error: { code: 'body_too_large', field: 'body' } });
      // A new connection right after: answered (a restarted or stuck Worker would not be, within the abort).
      const health = await fetch(`${product.base}/healthz`, { signal: AbortSignal.timeout(15_000) });
      expect(health.status).toBe(200);
    }
    const after = (await (await fetch(`${product.base}/v1/admin/datasets/harrow-vale-care/versions`, { headers: { authorization: `Bearer ${adminToken}` } })).json()) as { versions: unknown[] };
    expect(after.versions).toEqual(before.versions);
  }, 120_000);
});
