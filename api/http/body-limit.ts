import type { MiddlewareHandler } from 'hono';
import { bodyLimit } from 'hono/body-limit';
import { ApiError } from './api-error.ts';
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

/**
 * Reads a body up to `maxBytes`, refusing with 413 as soon as the declared length or the bytes
 * streamed so far pass it: a body sent without Content-Length (chunked) is never read whole.
 */
export async function readLimitedBytes(request: Request, maxBytes: number): Promise<Uint8Array> {
  const tooLarge = (got: string) => new ApiError(413, 'body_too_large', `body: at most ${maxBytes} bytes are accepted here, got ${got}`, 'body');
  const declared = request.headers.get('content-length');
  if (declared !== null && Number(declared) > maxBytes) throw tooLarge(declared);
  if (request.body === null) return new Uint8Array(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > maxBytes) {
      await reader.cancel('body too large');
      throw tooLarge(`more than that after ${total} bytes`);
    }
    chunks.push(value);
  }
  const out = new Uint8Array(total);
  let offset = 0;
  for (const chunk of chunks) {
    out.set(chunk, offset);
    offset += chunk.byteLength;
  }
  return out;
}
