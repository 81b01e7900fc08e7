import type { MiddlewareHandler } from 'hono';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';

/** Operator routes. Until operator accounts exist, nobody passes. */
export function operatorOnly(): MiddlewareHandler<AppBindings> {
  return async function operatorCheck() {
    throw new ApiError(403, 'role_forbidden', 'this needs the operator role', 'role');
  };
}
