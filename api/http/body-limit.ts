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
 * Reads and drops what is left of a refused body, up to `maxBytes`, then cancels it. A server that
 * answers while the client is still sending gets its answer lost by some proxies (wrangler dev
 * answers 503 "restarted mid-request", or the client waits on a full window), so a body at most
 * twice the limit is read to its end and the client sees the complete 413; a longer one is cut.
 */
async function drain(reader: ReadableStreamDefaultReader<Uint8Array>, maxBytes: number): Promise<void> {
  let dropped = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) return;
    dropped += value.byteLength;
    if (dropped > maxBytes) {
      await reader.cancel('body too large');
      return;
    }
  }
}

/**
 * Reads a body up to `maxBytes`, refusing with 413 as soon as the declared length or the bytes
 * streamed so far pass it: a body sent without Content-Length (chunked) is never read whole.
 * Large bodies go through here, not limitBody: hono's bodyLimit gathers a chunked body in a
 * buffer it doubles, up to twice the limit at once, which for a 64 MiB upload was more than an
 * isolate's 128 MB (the Worker restarted mid-request). Here chunks are kept as they come and
 * copied once, so the peak is twice the bytes actually received.
 */
export async function readLimitedBytes(request: Request, maxBytes: number): Promise<Uint8Array<ArrayBuffer>> {
  const tooLarge = (got: string) => new ApiError(413, 'body_too_large', `body: at most ${maxBytes} bytes are accepted here, got ${got}`, 'body');
  const declared = request.headers.get('content-length');
  if (declared !== null && Number(declared) > maxBytes) {
    if (Number(declared) <= 2 * maxBytes && request.body) await drain(request.body.getReader(), maxBytes);
    throw tooLarge(declared);
  }
  if (request.body === null) return new Uint8Array(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > maxBytes) {
      await drain(reader, maxBytes);
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
