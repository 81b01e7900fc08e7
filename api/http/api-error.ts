/**
 * A refusal the caller can act on: HTTP status, stable machine code, human message and, where
 * one input is at fault, the field that names it. Anything else thrown becomes a bare 500.
 */
export class ApiError extends Error {
  readonly status: 400 | 401 | 403 | 404 | 409 | 410 | 413 | 415 | 422 | 429 | 503;
  readonly code: string;
  readonly field: string | undefined;
  /** Response headers the refusal needs, for instance Retry-After on a 429 (RFC 9110, 10.2.3). */
  readonly headers: Readonly<Record<string, string>>;

  constructor(status: ApiError['status'], code: string, message: string, field?: string, headers: Record<string, string> = {}) {
    super(message);
    this.headers = headers;
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.field = field;
  }
}
