import { and, eq } from 'drizzle-orm';
import type { Context, MiddlewareHandler } from 'hono';
import { database } from '../db/client.ts';
import { credentials, tenants } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { enforceKeyKind } from './browser-keys.ts';
import { parseKeyScope } from './key-scope.ts';
import { hashSecret, SECRET_PREFIX } from './secrets.ts';

export interface CredentialRow {
  id: string;
  tenantId: string;
  tenantSlug: string;
  label: string;
  datasetScope: string | null;
  monthlyQuota: number | null;
  /** Browser keys: their origins (JSON) and per-client rate; null for server keys and admin tokens. */
  origins: string | null;
  requestsPerMinute: number | null;
}

/**
 * Reads `Authorization: Bearer <secret>` of the given kind (per RFC 6750) and finds the live
 * credential. Missing or malformed header: 401; wrong kind, unknown or revoked: 403.
 */
export async function bearerCredential(c: Context<AppBindings>, kind: 'admin' | 'query'): Promise<CredentialRow> {
  const noun = kind === 'admin' ? 'admin token' : 'API key';
  const header = c.req.header('authorization') ?? '';
  const match = /^Bearer\s+(\S+)$/i.exec(header);
  if (!match) throw new ApiError(401, 'credential_missing', `an ${noun} is required: send "Authorization: Bearer <${noun}>"`, 'authorization');
  const secret = match[1]!;
  if (!secret.startsWith(SECRET_PREFIX[kind])) {
    throw new ApiError(403, 'credential_wrong_kind', `this route needs an ${noun} (it starts with ${SECRET_PREFIX[kind]})`, 'authorization');
  }
  const [row] = await database(c.env)
    .select({
      id: credentials.id,
      tenantId: credentials.tenantId,
      tenantSlug: tenants.slug,
      label: credentials.label,
      revokedAt: credentials.revokedAt,
      datasetScope: credentials.datasetScope,
      monthlyQuota: credentials.monthlyQuota,
      origins: credentials.origins,
      requestsPerMinute: credentials.requestsPerMinute,
    })
    .from(credentials)
    .innerJoin(tenants, eq(tenants.id, credentials.tenantId))
    .where(and(eq(credentials.secretHash, await hashSecret(secret)), eq(credentials.kind, kind)))
    .limit(1);
  if (!row) throw new ApiError(403, 'credential_unknown', `the ${noun} is not known`, 'authorization');
  if (row.revokedAt !== null) throw new ApiError(403, 'credential_revoked', `the ${noun} was revoked at ${row.revokedAt}`, 'authorization');
  const { revokedAt: _revoked, ...live } = row;
  return live;
}

/** Requires a credential of the given kind and puts its tenant and id on the context. */
export function requireCredential(kind: 'admin' | 'query'): MiddlewareHandler<AppBindings> {
  return async function credentialCheck(c, next) {
    const row = await bearerCredential(c, kind);
    if (kind === 'query') await enforceKeyKind(c, row);
    c.set('tenantId', row.tenantId);
    c.set('credentialId', row.id);
    c.set('keyScope', parseKeyScope(row.datasetScope));
    c.set('monthlyQuota', row.monthlyQuota);
    await next();
  };
}
