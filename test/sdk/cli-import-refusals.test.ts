import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';

/**
 * `nearveil import` against a stand-in API on loopback that records every request: a table with
 * problems never reaches it, and a dataset the import created is deleted when the upload is refused.
 */
let server: Server;
let endpoint = '';
let folder = '';
let seen: string[] = [];
let datasetExists = false;

beforeAll(async () => {
  folder = mkdtempSync(join(tmpdir(), 'nearveil-import-'));
  server = createServer((req, res) => {
    seen.push(`${req.method} ${req.url}`);
    req.resume();
    req.on('end', () => {
      const reply = (status: number, body: unknown) => res.writeHead(status, { 'content-type': 'application/json' }).end(JSON.stringify(body));
      if (req.method === 'POST' && req.url === '/v1/admin/datasets') {
        if (datasetExists) return reply(409, { error: { code: 'dataset_exists', message: 'dataset "clinics" exists', field: 'slug' } });
        return reply(201, { slug: 'clinics', name: 'clinics', activeVersion: null, createdAt: '2026-12-03T00:00:00Z' });
      }
      if (req.method === 'POST' && req.url === '/v1/admin/datasets/clinics/versions') {
        return reply(413, { error: { code: 'body_too_large', message: 'body: at most 33554432 bytes are accepted here', field: 'body' } });
      }
      if (req.method === 'DELETE' && req.url === '/v1/admin/datasets/clinics') return reply(200, { dataset: 'clinics', name: 'clinics', deletedAt: '2026-12-03T00:00:00Z', activeVersion: null });
      reply(404, { error: { code: 'route_unknown', message: 'no such route' } });
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  endpoint = `http://127.0.0.1:${(server.address() as { port: number }).port}`;
});

afterAll(async () => {
  await new Promise((resolve) => server.close(resolve));
  rmSync(folder, { recursive: true, force: true });
});

beforeEach(() => {
  seen = [];
  datasetExists = false;
});

const file = (name: string, text: string) => {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
};
const env = () => ({ NEARVEIL_ENDPOINT: endpoint, NEARVEIL_TOKEN: 'nva_invented', NEARVEIL_HOME: folder });

describe('nearveil import refusals', () => {
  it('names the separator of a semicolon file, and sends nothing (no empty dataset is made)', async () => {
    const r = await runCli(['import', file('semi.csv', 'id;name;lat;lon\na;A;-76;60\n'), '--dataset', 'clinics'], env());
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/separated by semicolons \(;\), but nearveil reads comma-separated CSV/);
    expect(seen).toEqual([]);
  });

  it('lists the columns found and the rename for Latitude and Longitude headers, and sends nothing', async () => {
    const r = await runCli(['import', file('spelled.csv', 'id,Latitude,Longitude\na,-76,60\n'), '--dataset', 'clinics'], env());
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/rename column "Latitude" to "lat"/);
    expect(r.err).toMatch(/rename column "Longitude" to "lon"/);
    expect(seen).toEqual([]);
  });

  it('deletes the dataset it just created when the server refuses the upload', async () => {
    const r = await runCli(['import', file('ok.csv', 'id,lat,lon\na,-76,60\n'), '--dataset', 'clinics'], env());
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/body_too_large/);
    expect(seen).toEqual(['POST /v1/admin/datasets', 'POST /v1/admin/datasets/clinics/versions', 'DELETE /v1/admin/datasets/clinics']);
  });

  it('leaves a dataset that existed before alone when the upload is refused', async () => {
    datasetExists = true;
    const r = await runCli(['import', file('ok.csv', 'id,lat,lon\na,-76,60\n'), '--dataset', 'clinics'], env());
    expect(r.code).toBe(1);
    expect(seen).toEqual(['POST /v1/admin/datasets', 'POST /v1/admin/datasets/clinics/versions']);
  });
});
