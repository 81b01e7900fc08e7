import type { MiddlewareHandler } from 'hono';
import { bodyLimit } from 'hono/body-limit';
import { errorBody } from './error-handler.ts';

/**
 * Refuses bodies over `maxBytes` before they are read whole (hono's bodyLimit checks
 * Content-Length first and counts a streamed body as it arrives).
 */
export function limitBody(maxBytes: number): MiddlewareHandler {
  return bodyLimit({
    maxSize: maxBytes,
    onError: (c) => c.json(errorBody('body_too_large', `request body is over the ${maxBytes} byte limit`, 'body'), 413),
  });
}
