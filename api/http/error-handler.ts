import type { Context } from 'hono';
import { HTTPException } from 'hono/http-exception';
import { ZodError } from 'zod';
import { InputError } from '../../core/errors/input-error.ts';
import { ApiError } from './api-error.ts';

/** Every error body has this shape: `{ error: { code, message, field?, details? } }`. */
export function errorBody(code: string, message: string, field?: string, details?: unknown) {
  return { error: { code, message, ...(field === undefined ? {} : { field }), ...(details === undefined ? {} : { details }) } };
}

/** Maps client faults to 4xx JSON; logs anything else and answers a bare 500 so internals never leak. */
export function handleError(err: Error, c: Context): Response {
  if (err instanceof ApiError) return c.json(errorBody(err.code, err.message, err.field), err.status, { ...err.headers });
  if (err instanceof InputError) {
    const details = err.details.length > 0 ? err.details : undefined;
    return c.json(errorBody(err.code, err.message, err.field, details), err.status);
  }
  if (err instanceof ZodError) {
    const first = err.issues[0];
    const field = first ? first.path.join('.') || 'body' : 'body';
    return c.json(errorBody('invalid_body', first ? `${field}: ${first.message}` : 'invalid body', field), 400);
  }
  if (err instanceof HTTPException && err.status < 500) {
    return c.json(errorBody('http_' + err.status, err.message || 'request refused'), err.status);
  }
  console.error('nearveil: unhandled error', err);
  return c.json(errorBody('internal', 'internal error'), 500);
}
