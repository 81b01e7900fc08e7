import { OpenAPIHono } from '@hono/zod-openapi';
import { z } from 'zod';
import { ERROR_CODES } from '../http/error-codes.ts';
import { ErrorBody } from './response-schemas.ts';
import { ROUTE_DOCS, type Access, type RouteDoc } from './route-docs.ts';

const SECURITY: Record<Access, Array<Record<string, string[]>>> = {
  public: [],
  api_key: [{ apiKey: [] }],
  session: [{ session: [] }],
  tenant_editor: [{ adminToken: [] }, { session: [], csrf: [] }],
  tenant_admin: [{ adminToken: [] }, { session: [], csrf: [] }],
  operator: [{ session: [], csrf: [] }],
};

const ACCESS_TEXT: Record<Access, string> = {
  public: 'No credential.',
  api_key: 'An API key: `Authorization: Bearer nvk_...`.',
  session: 'The session cookie.',
  tenant_editor: 'Role tenant_editor or higher (an admin token acts as tenant_admin). The operator names the tenant with ?tenant=SLUG.',
  tenant_admin: 'Role tenant_admin or the operator (an admin token acts as tenant_admin). The operator names the tenant with ?tenant=SLUG.',
  operator: 'The operator only.',
};

/** The HTTP status an error code is answered with, as written in its description "(NNN)". */
export function statusOfCode(code: string): string {
  return /\((\d{3})\)\.?$/.exec(ERROR_CODES[code] ?? '')?.[1] ?? '400';
}

function register(registry: OpenAPIHono['openAPIRegistry'], doc: RouteDoc): void {
  const pathParams = [...doc.path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]!);
  const errorsByStatus = new Map<string, string[]>();
  for (const code of doc.errors) errorsByStatus.set(statusOfCode(code), [...(errorsByStatus.get(statusOfCode(code)) ?? []), code]);
  const responses: Record<string, { description: string; content?: Record<string, { schema: z.ZodType }> }> = {
    [doc.ok.status]: {
      description: doc.ok.description,
      ...(doc.ok.status === 204 ? {} : { content: { [doc.ok.contentType ?? 'application/json']: { schema: doc.ok.schema ?? z.unknown() } } }),
    },
  };
  for (const [status, codes] of [...errorsByStatus].sort()) {
    responses[status] = { description: codes.map((c) => `\`${c}\`: ${ERROR_CODES[c]}`).join('\n\n'), content: { 'application/json': { schema: ErrorBody } } };
  }
  registry.registerPath({
    method: doc.method,
    path: doc.path,
    tags: [doc.tag],
    summary: doc.summary,
    description: [doc.description, `Access: ${ACCESS_TEXT[doc.access]}`].filter(Boolean).join('\n\n'),
    security: SECURITY[doc.access],
    request: {
      ...(pathParams.length > 0 ? { params: z.object(Object.fromEntries(pathParams.map((p) => [p, z.string()]))) } : {}),
      ...(doc.query ? { query: doc.query } : {}),
      ...(doc.body ? { body: { required: true, description: doc.body.description ?? '', content: { [doc.body.contentType]: { schema: doc.body.schema ?? z.string() } } } } : {}),
    },
    responses,
  } as Parameters<typeof registry.registerPath>[0]);
}

let cached: ReturnType<OpenAPIHono['getOpenAPI31Document']> | undefined;

/** The OpenAPI 3.1 document of every route, generated from the zod schemas (built once per isolate). */
export function openApiDocument() {
  if (cached) return cached;
  const generator = new OpenAPIHono();
  const registry = generator.openAPIRegistry;
  registry.registerComponent('securitySchemes', 'adminToken', { type: 'http', scheme: 'bearer', description: 'A tenant admin token, nva_...' });
  registry.registerComponent('securitySchemes', 'apiKey', { type: 'http', scheme: 'bearer', description: 'An API key for apps, nvk_...' });
  registry.registerComponent('securitySchemes', 'session', { type: 'apiKey', in: 'cookie', name: 'nv_session', description: 'Set by POST /v1/session' });
  registry.registerComponent('securitySchemes', 'csrf', { type: 'apiKey', in: 'header', name: 'x-nearveil-csrf', description: 'The csrfToken of the session; needed on signed-in requests other than GET' });
  for (const doc of ROUTE_DOCS) register(registry, doc);
  cached = generator.getOpenAPI31Document({
    openapi: '3.1.0',
    info: {
      title: 'nearveil API',
      version: '0.1.0',
      description:
        'Private nearest-site lookup. Every error body is `{ error: { code, message, field? } }`: `code` is stable, `message` is for people. ' +
        'Straight-line nearest is not nearest by travel time; site data can be out of date; in an emergency call the local emergency number. ' +
        'Privacy covers the location inside the query, not the network address or timing of requests.',
    },
    tags: [...new Set(ROUTE_DOCS.map((d) => d.tag))].map((name) => ({ name })),
  });
  return cached;
}
