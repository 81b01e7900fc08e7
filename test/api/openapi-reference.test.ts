import { beforeAll, describe, expect, it } from 'vitest';
import { app } from '../../api/app.ts';
import { ERROR_CODES } from '../../api/http/error-codes.ts';
import { BASE, createTestTenant, worker, type TestTenant } from './tenant-fixture.ts';
import { createTestUser, signIn, type TestSession } from './user-fixture.ts';

interface OpenApiDoc {
  openapi: string;
  info: { title: string; version: string };
  paths: Record<string, Record<string, { responses: Record<string, unknown>; security?: unknown[]; parameters?: Array<{ name: string; in: string }> }>>;
  components: { schemas: Record<string, unknown>; securitySchemes: Record<string, unknown> };
  'x-error-codes': Record<string, string>;
}

/** The routes Hono actually serves (middleware entries have method ALL), in OpenAPI path form. */
function servedRoutes(): string[] {
  const seen = new Set<string>();
  for (const r of app.routes) {
    if (r.method === 'ALL') continue;
    seen.add(`${r.method.toLowerCase()} ${r.path.replace(/:(\w+)/g, '{$1}')}`);
  }
  return [...seen].sort();
}

describe('OpenAPI 3.1 document and reference page', () => {
  let doc: OpenApiDoc;
  let t: TestTenant;
  let operator: TestSession;

  beforeAll(async () => {
    const res = await worker(`${BASE}/openapi.json`);
    expect(res.status).toBe(200);
    doc = (await res.json()) as OpenApiDoc;
    t = await createTestTenant();
    operator = await signIn(await createTestUser(null, 'operator'));
  });

  it('is an OpenAPI 3.1.0 document with the parts the specification requires', () => {
    // OpenAPI Specification 3.1.0, section 4.8.1: openapi and info (title, version) are required,
    // and a 3.1 document has at least one of paths, components or webhooks.
    expect(doc.openapi).toBe('3.1.0');
    expect(doc.info.title.length).toBeGreaterThan(0);
    expect(doc.info.version.length).toBeGreaterThan(0);
    for (const [path, ops] of Object.entries(doc.paths)) {
      expect(path.startsWith('/')).toBe(true);
      for (const [method, op] of Object.entries(ops)) {
        expect(['get', 'post', 'put', 'patch', 'delete']).toContain(method);
        expect(Object.keys(op.responses).length).toBeGreaterThan(0);
        for (const status of Object.keys(op.responses)) expect(status).toMatch(/^[1-5]\d\d$/);
        // Every {name} in a path is declared as a required path parameter (section 4.8.12).
        for (const name of [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1])) {
          expect(op.parameters?.some((p) => p.name === name && p.in === 'path')).toBe(true);
        }
        for (const requirement of op.security ?? []) {
          for (const scheme of Object.keys(requirement as object)) expect(doc.components.securitySchemes[scheme]).toBeDefined();
        }
      }
    }
    // Every $ref points at a schema that exists.
    for (const ref of JSON.stringify(doc).match(/"#\/components\/schemas\/[^"]+"/g) ?? []) {
      expect(doc.components.schemas[ref.slice('"#/components/schemas/'.length, -1)]).toBeDefined();
    }
  });

  it('documents exactly the routes the Worker serves', () => {
    const documented = Object.entries(doc.paths).flatMap(([path, ops]) => Object.keys(ops).map((m) => `${m} ${path}`)).sort();
    expect(documented).toEqual(servedRoutes());
  });

  it('lists every error code with its meaning, and documents each route’s codes by status', () => {
    expect(doc['x-error-codes']).toEqual(ERROR_CODES);
    const publish = doc.paths['/v1/admin/datasets/{dataset}/versions/{version}/publish']!.post!;
    expect(JSON.stringify(publish.responses['403'])).toContain('role_forbidden');
    expect(JSON.stringify(publish.responses['409'])).toContain('version_state');
  });

  it('answers every documented route (no route_unknown), and every error it answers has a listed code', async () => {
    const fill = (path: string) => path.replace('{dataset}', 'no-such-set').replace('{version}', '1').replace('{id}', 'no-such-id').replace('{tenant}', 'no-such-tenant').replace('{month}', '2026-13');
    for (const [path, ops] of Object.entries(doc.paths)) {
      for (const method of Object.keys(ops)) {
        const headers: Record<string, string> = {};
        const usesKey = path.startsWith('/v1/datasets');
        if (usesKey) headers.authorization = `Bearer ${t.apiKey}`;
        else if (path.startsWith('/v1/operator')) Object.assign(headers, { cookie: operator.cookie, 'x-nearveil-csrf': operator.csrfToken });
        else if (path.startsWith('/v1/admin')) headers.authorization = `Bearer ${t.adminToken}`;
        const hasBody = method === 'post' || method === 'put' || method === 'patch';
        if (hasBody) headers['content-type'] = 'application/json';
        // redirect: 'manual', so the redirect at / is checked itself, not the page it points to.
        const res = await worker(`${BASE}${fill(path)}`, { method: method.toUpperCase(), headers, redirect: 'manual', ...(hasBody ? { body: '{}' } : {}) });
        const label = `${method.toUpperCase()} ${path} -> ${res.status}`;
        if (res.status >= 400 && path.startsWith('/find/')) {
          // The finder page is for people: an unknown or switched-off page is a plain HTML 404.
          expect(res.headers.get('content-type'), label).toMatch(/^text\/html/);
          expect(await res.text(), label).toContain('This finder page is not available');
        } else if (res.status >= 400) {
          const body = (await res.json()) as { error: { code: string; message: string } };
          expect(body.error.code, label).not.toBe('route_unknown');
          expect(Object.keys(ERROR_CODES), label).toContain(body.error.code);
          expect(Object.keys(ops[method]!.responses), `${label} ${body.error.code} documented`).toContain(String(res.status));
        } else {
          await res.arrayBuffer();
        }
      }
    }
  });

  it('serves a readable reference page built from the document, with no outside scripts or fonts', async () => {
    const res = await worker(`${BASE}/reference`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^text\/html/);
    expect(res.headers.get('content-security-policy')).toContain("default-src 'none'");
    const html = await res.text();
    expect(html).not.toMatch(/<script|<link|@import|https?:\/\/(?!127)/i);
    for (const path of Object.keys(doc.paths)) expect(html).toContain(path.replace(/&/g, '&#38;'));
    for (const code of Object.keys(ERROR_CODES)) expect(html).toContain(`<code>${code}</code>`);
    expect(html).toContain('emergency');
  });
});
