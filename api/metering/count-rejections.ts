import type { MiddlewareHandler } from 'hono';
import { InputError } from '../../core/errors/input-error.ts';
import { database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { recordRejectedQuery } from './record-rejection.ts';

/**
 * Counts every refused query (4xx after the API key was accepted: bad query, over quota, wrong
 * scope, unknown dataset or version, body too large) apart from usage. Counted before the
 * refusal goes out, so a client that saw the refusal finds it in the usage report.
 */
export function countRejections(): MiddlewareHandler<AppBindings> {
  return async function rejectionCounter(c, next) {
    await next();
    const status = c.res.status;
    if (status < 400 || status >= 500 || !c.var.credentialId) return;
    const err = c.error;
    const reason = err instanceof ApiError || err instanceof InputError ? err.code : status === 413 ? 'body_too_large' : `http_${status}`;
    try {
      await recordRejectedQuery(database(c.env), {
        tenantId: c.var.tenantId,
        credentialId: c.var.credentialId,
        datasetSlug: c.req.param('dataset') ?? '',
        reason,
      });
    } catch (countErr) {
      // The refusal still goes out; a lost rejection count is never billed either way.
      console.error('nearveil: could not count a rejected query', countErr);
    }
  };
}
