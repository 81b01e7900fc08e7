/** A refusal from the nearveil API, or a transport failure, with the server's code and field. */
export class NearveilError extends Error {
  readonly status: number;
  readonly code: string;
  readonly field: string | undefined;
  /** Per-row problems the server listed, for instance the cells of a site table at fault. */
  readonly details: ReadonlyArray<{ row?: number; column?: string; message: string }>;
  /** Seconds to wait before trying again, from a refusal's Retry-After header; null when it sent none. */
  readonly retryAfterSeconds: number | null;

  constructor(status: number, code: string, message: string, field?: string, details: NearveilError['details'] = [], retryAfterSeconds: number | null = null) {
    super(message);
    this.name = 'NearveilError';
    this.status = status;
    this.code = code;
    this.field = field;
    this.details = details;
    this.retryAfterSeconds = retryAfterSeconds;
  }
}

/**
 * Retry-After in its delay-seconds form (RFC 9110 section 10.2.3), the form nearveil sends; an
 * HTTP-date or anything else gives null.
 */
export function retryAfterFrom(header: string | null): number | null {
  return header !== null && /^\s*\d{1,9}\s*$/.test(header) ? Number(header) : null;
}

export type FetchLike = (input: Request) => Promise<Response>;

export interface HttpOptions {
  endpoint: string;
  /** A bearer secret: an API key or an admin token ('' sends none). Ignored when `session` is given. */
  secret: string;
  /** A signed-in person instead (sdk/session.ts): the session cookie and its CSRF token. */
  session?: SessionCredentials;
  fetch?: FetchLike;
}

export interface SessionCredentials {
  cookie: string;
  csrfToken: string;
}

/** Per RFC 9110 section 9.2.1 these change nothing, so a session sends no CSRF token with them. */
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/** Sends one request with the bearer secret (or the session); any non-2xx answer becomes a NearveilError. */
export async function send(options: HttpOptions, method: string, path: string, body?: BodyInit, contentType?: string, signal?: AbortSignal): Promise<Response> {
  const url = new URL(path, options.endpoint.endsWith('/') ? options.endpoint : options.endpoint + '/');
  const headers: Record<string, string> = options.session
    ? { cookie: options.session.cookie, ...(SAFE_METHODS.has(method) ? {} : { 'x-nearveil-csrf': options.session.csrfToken }) }
    : options.secret
      ? { authorization: `Bearer ${options.secret}` }
      : {};
  if (contentType) headers['content-type'] = contentType;
  const request = new Request(url, { method, headers, ...(body === undefined ? {} : { body }), ...(signal ? { signal } : {}) });
  let response: Response;
  try {
    response = await (options.fetch ?? fetch)(request);
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    throw new NearveilError(0, 'unreachable', `cannot reach ${url.origin}: ${reason}`);
  }
  if (response.ok) return response;
  throw await errorFrom(response);
}

async function errorFrom(response: Response): Promise<NearveilError> {
  const text = await response.text();
  try {
    const body = JSON.parse(text) as { error?: { code?: string; message?: string; field?: string; details?: NearveilError['details'] } };
    if (body.error?.message) {
      const retryAfter = retryAfterFrom(response.headers.get('retry-after'));
      return new NearveilError(response.status, body.error.code ?? 'error', body.error.message, body.error.field, body.error.details ?? [], retryAfter);
    }
  } catch {
    // not JSON: fall through to the status line
  }
  return new NearveilError(response.status, 'http_' + response.status, `HTTP ${response.status}: ${text.slice(0, 200)}`);
}

/** Reads `dur` of the first Server-Timing metric (W3C Server Timing), in milliseconds. */
export function serverTimingMs(response: Response): number | null {
  const header = response.headers.get('server-timing');
  const match = header ? /dur=([0-9.]+)/.exec(header) : null;
  return match ? Number(match[1]) : null;
}
