import { and, eq } from 'drizzle-orm';
import type { MiddlewareHandler } from 'hono';
import { database } from '../db/client.ts';
import { credentials } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { parseKeyScope } from './key-scope.ts';
import { hashSecret, SECRET_PREFIX } from './secrets.ts';

/**
 * Requires `Authorization: Bearer <secret>` of the given kind (per RFC 6750) and puts the
 * tenant and credential ids on the context. Missing: 401; unknown or revoked: 403.
 */
export function requireCredential(kind: 'admin' | 'query'): MiddlewareHandler<AppBindings> {
  const noun = kind === 'admin' ? 'admin token' : 'API key';
  return async function credentialCheck(c, next) {
    const header = c.req.header('authorization') ?? '';
    const match = /^Bearer\s+(\S+)$/i.exec(header);
    if (!match) throw new ApiError(401, 'credential_missing', `an ${noun} is required: send "Authorization: Bearer <${noun}>"`, 'authorization');
    const secret = match[1]!;
    if (!secret.startsWith(SECRET_PREFIX[kind])) {
      throw new ApiError(403, 'credential_wrong_kind', `this route needs an ${noun} (it starts with ${SECRET_PREFIX[kind]})`, 'authorization');
    }
    const [row] = await database(c.env)
      .select()
      .from(credentials)
      .where(and(eq(credentials.secretHash, await hashSecret(secret)), eq(credentials.kind, kind)))
      .limit(1);
    if (!row) throw new ApiError(403, 'credential_unknown', `the ${noun} is not known`, 'authorization');
    if (row.revokedAt !== null) throw new ApiError(403, 'credential_revoked', `the ${noun} was revoked at ${row.revokedAt}`, 'authorization');
    c.set('tenantId', row.tenantId);
    c.set('credentialId', row.id);
    c.set('keyScope', parseKeyScope(row.datasetScope));
    c.set('monthlyQuota', row.monthlyQuota);
    await next();
  };
}
