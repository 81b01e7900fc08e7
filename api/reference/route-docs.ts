import { z } from 'zod';
import { LAYOUT_CHOICES } from '../../core/build/choose-layout.ts';
import { CreateTenantBody, CreateUserBody, UpdateUserBody } from '../accounts/account-schemas.ts';
import { CreateKeyBody } from '../auth/key-routes.ts';
import { SignInBody } from '../auth/session-routes.ts';
import { CreateDatasetBody } from '../datasets/admin-routes.ts';
import { ApiKey, AuditEvent, Dataset, SessionBody, Tenant, UsageReport, User, Version } from './response-schemas.ts';

/** Who may call a route: nobody in particular, an API key, a role (admin token or session). */
export type Access = 'public' | 'api_key' | 'session' | 'tenant_editor' | 'tenant_admin' | 'operator';

export interface RouteDoc {
  method: 'get' | 'post' | 'patch' | 'delete';
  /** OpenAPI form: /v1/admin/datasets/{dataset} */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  access: Access;
  query?: z.ZodObject;
  body?: { schema?: z.ZodType; contentType: string; description?: string };
  ok: { status: number; description: string; schema?: z.ZodType; contentType?: string };
  /** Machine codes this route may answer with (all listed in api/http/error-codes.ts). */
  errors: string[];
}

const tenantQuery = z.object({ tenant: z.string().optional().describe('operator only: the tenant to act on (slug)') });
const AUTH = ['credential_missing', 'credential_wrong_kind', 'credential_unknown', 'credential_revoked', 'session_unknown', 'session_expired', 'user_disabled', 'csrf_missing', 'csrf_mismatch', 'role_forbidden', 'tenant_forbidden', 'tenant_required', 'tenant_unknown'];
const KEY = ['credential_missing', 'credential_wrong_kind', 'credential_unknown', 'credential_revoked', 'key_scope', 'invalid_dataset', 'dataset_unknown'];
const JSON_BODY = ['invalid_json', 'invalid_body', 'body_too_large'];
const json = (schema: z.ZodType) => ({ schema, contentType: 'application/json' });

/** Every route of the Worker (a test checks this list against the app's routes). */
export const ROUTE_DOCS: RouteDoc[] = [
  { method: 'get', path: '/', tag: 'Service', summary: 'Redirects to the admin console at /console/', access: 'public', ok: { status: 302, description: 'a redirect to /console/' }, errors: [] },
  { method: 'get', path: '/healthz', tag: 'Service', summary: 'Liveness check', access: 'public', ok: { status: 200, description: '{ ok: true }', schema: z.object({ ok: z.literal(true) }) }, errors: [] },
  { method: 'get', path: '/openapi.json', tag: 'Service', summary: 'This OpenAPI 3.1 document', access: 'public', ok: { status: 200, description: 'the document' }, errors: [] },
  { method: 'get', path: '/reference', tag: 'Service', summary: 'The API reference as a web page', access: 'public', ok: { status: 200, description: 'HTML', contentType: 'text/html' }, errors: [] },

  { method: 'post', path: '/v1/session', tag: 'Session', summary: 'Sign in', description: 'Sets the nv_session cookie (HttpOnly, Secure, SameSite=Strict). After failed sign-ins the email and the client address wait longer and longer (429 with Retry-After).', access: 'public', body: json(SignInBody), ok: { status: 200, description: 'signed in', schema: SessionBody }, errors: [...JSON_BODY, 'content_type', 'login_failed', 'login_throttled'] },
  { method: 'get', path: '/v1/session', tag: 'Session', summary: 'The signed-in user and the CSRF token', access: 'session', ok: { status: 200, description: 'signed in', schema: SessionBody }, errors: ['credential_missing', 'session_unknown', 'session_expired', 'user_disabled'] },
  { method: 'delete', path: '/v1/session', tag: 'Session', summary: 'Sign out', access: 'session', ok: { status: 204, description: 'signed out; the cookie is cleared' }, errors: ['credential_missing', 'session_unknown', 'session_expired', 'csrf_missing', 'csrf_mismatch'] },

  { method: 'post', path: '/v1/admin/datasets', tag: 'Datasets', summary: 'Create a dataset', access: 'tenant_editor', query: tenantQuery, body: json(CreateDatasetBody), ok: { status: 201, description: 'created', schema: Dataset }, errors: [...AUTH, ...JSON_BODY, 'dataset_exists'] },
  { method: 'get', path: '/v1/admin/datasets', tag: 'Datasets', summary: "List the tenant's datasets", access: 'tenant_editor', query: tenantQuery, ok: { status: 200, description: 'the datasets', schema: z.object({ datasets: z.array(Dataset) }) }, errors: AUTH },
  { method: 'get', path: '/v1/admin/datasets/{dataset}/versions', tag: 'Datasets', summary: "List a dataset's versions", access: 'tenant_editor', query: tenantQuery, ok: { status: 200, description: 'the versions, newest first', schema: z.object({ dataset: z.string(), activeVersion: z.number().int().nullable(), versions: z.array(Version) }) }, errors: [...AUTH, 'invalid_dataset', 'dataset_unknown'] },
  { method: 'post', path: '/v1/admin/datasets/{dataset}/versions', tag: 'Datasets', summary: 'Upload a site table as a new draft version', description: 'CSV with columns id, lat, lon (required), name (optional), any other column a detail.', access: 'tenant_editor', query: tenantQuery, body: { contentType: 'text/csv', schema: z.string(), description: 'the site table' }, ok: { status: 201, description: 'the draft version', schema: Version }, errors: [...AUTH, 'invalid_dataset', 'dataset_unknown', 'content_type', 'body_too_large', 'site_table', 'version_conflict'] },
  { method: 'post', path: '/v1/admin/datasets/{dataset}/versions/{version}/build', tag: 'Datasets', summary: 'Build a draft version into a cell matrix and manifest', access: 'tenant_editor', query: tenantQuery.extend({ layout: z.enum(LAYOUT_CHOICES as [string, ...string[]]).optional(), maxK: z.number().int().min(1).max(8).optional().describe('build for the k nearest, 1-8 (default 1)') }), ok: { status: 200, description: 'the built (ready) version with its layout, maxK and matrix shape', schema: Version }, errors: [...AUTH, 'invalid_dataset', 'invalid_version', 'invalid_layout', 'invalid_max_k', 'dataset_unknown', 'version_unknown', 'version_state', 'build_failed'] },
  { method: 'post', path: '/v1/admin/datasets/{dataset}/versions/{version}/publish', tag: 'Datasets', summary: 'Make a ready version the active one', access: 'tenant_admin', query: tenantQuery, ok: { status: 200, description: 'the new and previous active versions', schema: z.object({ dataset: z.string(), activeVersion: z.number().int(), previousVersion: z.number().int().nullable() }) }, errors: [...AUTH, 'invalid_dataset', 'invalid_version', 'dataset_unknown', 'version_unknown', 'version_state'] },

  { method: 'get', path: '/v1/admin/datasets/{dataset}/versions/{version}/table', tag: 'Datasets', summary: "A version's stored site table, as uploaded (for the console's comparisons and export)", access: 'tenant_editor', query: tenantQuery, ok: { status: 200, description: 'the site table', contentType: 'text/csv' }, errors: [...AUTH, 'invalid_dataset', 'invalid_version', 'dataset_unknown', 'version_unknown', 'table_gone'] },
  { method: 'get', path: '/v1/admin/datasets/{dataset}/versions/{version}/manifest', tag: 'Datasets', summary: "A built version's manifest, active or not (for the console's map and cost)", access: 'tenant_editor', query: tenantQuery, ok: { status: 200, description: 'the manifest (core/geo/MANIFEST.md)' }, errors: [...AUTH, 'invalid_dataset', 'invalid_version', 'dataset_unknown', 'version_unknown', 'version_state', 'manifest_gone'] },
  { method: 'post', path: '/v1/admin/keys', tag: 'API keys', summary: 'Make an API key (the secret is shown once)', access: 'tenant_admin', query: tenantQuery, body: json(CreateKeyBody), ok: { status: 201, description: 'the key and its secret', schema: ApiKey.extend({ secret: z.string() }) }, errors: [...AUTH, ...JSON_BODY, 'dataset_unknown'] },
  { method: 'get', path: '/v1/admin/keys', tag: 'API keys', summary: "List the tenant's API keys", access: 'tenant_admin', query: tenantQuery, ok: { status: 200, description: 'the keys, without secrets', schema: z.object({ keys: z.array(ApiKey) }) }, errors: AUTH },
  { method: 'post', path: '/v1/admin/keys/{id}/revoke', tag: 'API keys', summary: 'Revoke an API key', access: 'tenant_admin', query: tenantQuery, ok: { status: 200, description: 'revoked', schema: z.object({ id: z.string(), revokedAt: z.string() }) }, errors: [...AUTH, 'key_unknown'] },

  { method: 'get', path: '/v1/admin/usage', tag: 'Usage', summary: 'Answered and refused queries of a month, per day and in total', access: 'tenant_editor', query: tenantQuery.extend({ dataset: z.string().optional(), month: z.string().optional().describe('YYYY-MM, default this UTC month') }), ok: { status: 200, description: 'the usage', schema: UsageReport }, errors: [...AUTH, 'invalid_month', 'invalid_dataset'] },

  { method: 'get', path: '/v1/admin/users', tag: 'Accounts', summary: "List users (tenant admins: their tenant's; the operator: all, or ?tenant=)", access: 'tenant_admin', query: tenantQuery, ok: { status: 200, description: 'the users', schema: z.object({ users: z.array(User) }) }, errors: AUTH },
  { method: 'post', path: '/v1/admin/users', tag: 'Accounts', summary: 'Add a user (without a password, a random one is shown once)', access: 'tenant_admin', query: tenantQuery, body: json(CreateUserBody), ok: { status: 201, description: 'the new user', schema: User }, errors: [...AUTH, ...JSON_BODY, 'user_exists', 'operator_has_no_tenant'] },
  { method: 'patch', path: '/v1/admin/users/{id}', tag: 'Accounts', summary: 'Change a role, disable or enable, or set a new password', description: 'Disabling a user or setting a new password ends all of their sessions.', access: 'tenant_admin', query: tenantQuery, body: json(UpdateUserBody), ok: { status: 200, description: 'the user', schema: User }, errors: [...AUTH, ...JSON_BODY, 'user_unknown', 'own_account', 'invalid_role'] },
  { method: 'get', path: '/v1/admin/audit', tag: 'Accounts', summary: 'Who did what and when, newest first', access: 'tenant_admin', query: tenantQuery.extend({ limit: z.number().int().min(1).max(500).optional(), before: z.string().optional().describe('the `next` value of the previous page') }), ok: { status: 200, description: 'one page of audit lines', schema: z.object({ events: z.array(AuditEvent), next: z.string().nullable() }) }, errors: [...AUTH, 'invalid_limit', 'invalid_before'] },
  { method: 'post', path: '/v1/operator/tenants', tag: 'Operator', summary: 'Create a tenant, with its first admin if given', access: 'operator', body: json(CreateTenantBody), ok: { status: 201, description: 'the tenant and its admin (with a one-time password when none was given)', schema: z.object({ slug: z.string(), name: z.string(), createdAt: z.string(), admin: User.nullable() }) }, errors: [...AUTH, ...JSON_BODY, 'tenant_exists', 'user_exists'] },
  { method: 'get', path: '/v1/operator/tenants', tag: 'Operator', summary: 'List tenants with their user and dataset counts', access: 'operator', ok: { status: 200, description: 'the tenants', schema: z.object({ tenants: z.array(Tenant) }) }, errors: AUTH },

  { method: 'get', path: '/v1/datasets/{dataset}/manifest', tag: 'Queries', summary: "The public manifest of the active (or ?version=) version", access: 'api_key', query: z.object({ version: z.number().int().min(1).optional() }), ok: { status: 200, description: 'the manifest (core/geo/MANIFEST.md)' }, errors: [...KEY, 'invalid_version', 'version_unknown', 'version_not_served', 'no_active_version', 'quota_exceeded'] },
  { method: 'post', path: '/v1/datasets/{dataset}/versions/{version}/query', tag: 'Queries', summary: 'Answer an encrypted column query (PIR)', description: 'Body and answer in the wire format of core/pir/WIRE.md. The server learns neither the column nor the point.', access: 'api_key', query: z.object({ matrix: z.enum(['cells', 'partition']).optional().describe("cells (default): candidate lists; partition: a veiled layout's first round") }), body: { contentType: 'application/octet-stream', description: 'the query (wire format)' }, ok: { status: 200, description: 'the answer (wire format); Server-Timing and X-Nearveil-Multiplications headers', contentType: 'application/octet-stream' }, errors: [...KEY, 'invalid_version', 'version_unknown', 'version_not_served', 'body_too_large', 'wire_format', 'modulus_even', 'modulus_size', 'value_count', 'value_range', 'value_jacobi', 'invalid_matrix', 'no_partition_matrix', 'quota_exceeded', 'part_failed'] },
  { method: 'post', path: '/v1/datasets/{dataset}/versions/{version}/details/query', tag: 'Queries', summary: 'Answer an encrypted query for the key of one sealed site record (details round)', description: 'Body and answer in the wire format of core/pir/WIRE.md; the server learns not which site was chosen.', access: 'api_key', body: { contentType: 'application/octet-stream', description: 'the query (wire format)' }, ok: { status: 200, description: 'the answer (wire format)', contentType: 'application/octet-stream' }, errors: [...KEY, 'invalid_version', 'version_unknown', 'version_not_served', 'details_unavailable', 'body_too_large', 'wire_format', 'modulus_even', 'modulus_size', 'value_count', 'value_range', 'value_jacobi', 'quota_exceeded', 'part_failed'] },
  { method: 'get', path: '/v1/datasets/{dataset}/versions/{version}/details/sealed', tag: 'Queries', summary: "The version's sealed site records (one file, the same for every caller)", access: 'api_key', ok: { status: 200, description: 'the sealed records', contentType: 'application/octet-stream' }, errors: [...KEY, 'invalid_version', 'version_unknown', 'version_not_served', 'details_unavailable'] },
];
