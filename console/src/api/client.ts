/**
 * The console's one door to the nearveil API. Two ways in: a login session (cookie `nv_session`
 * set by POST /v1/session, with the CSRF token sent on every state-changing request) or, where
 * the server has no accounts yet or for an operator's scripted checks, an admin token sent as a
 * Bearer header. Screens only call `request`/`json`; switching the way in changes nothing else.
 */
export type Auth = { kind: 'session'; csrfToken: string } | { kind: 'token'; token: string };

export interface SessionUser {
  id: string;
  email: string;
  role: 'operator' | 'tenant_admin' | 'tenant_editor';
  tenant: { slug: string; name: string } | null;
}

/** A refusal from the API with its stable code, message and the field at fault. */
export class ApiFailure extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly field?: string,
    readonly details: ReadonlyArray<{ row?: number; column?: string; message: string }> = [],
  ) {
    super(message);
    this.name = 'ApiFailure';
  }
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

export class ApiClient {
  constructor(
    readonly auth: Auth,
    private readonly base = '',
  ) {}

  async request(method: string, path: string, body?: { json?: unknown; text?: string; contentType?: string }): Promise<Response> {
    const headers: Record<string, string> = { accept: 'application/json' };
    if (this.auth.kind === 'token') headers.authorization = `Bearer ${this.auth.token}`;
    else if (!SAFE_METHODS.has(method)) headers['x-nearveil-csrf'] = this.auth.csrfToken;
    let payload: string | undefined;
    if (body?.json !== undefined) {
      payload = JSON.stringify(body.json);
      headers['content-type'] = 'application/json';
    } else if (body?.text !== undefined) {
      payload = body.text;
      headers['content-type'] = body.contentType ?? 'text/plain; charset=utf-8';
    }
    let response: Response;
    try {
      response = await fetch(this.base + path, { method, headers, credentials: 'same-origin', ...(payload === undefined ? {} : { body: payload }) });
    } catch (err) {
      throw new ApiFailure(0, 'unreachable', `cannot reach the server: ${err instanceof Error ? err.message : String(err)}`);
    }
    if (!response.ok) throw await failureFrom(response);
    return response;
  }

  async json<T>(method: string, path: string, json?: unknown): Promise<T> {
    const response = await this.request(method, path, json === undefined ? undefined : { json });
    return (await response.json()) as T;
  }

  async text(path: string): Promise<string> {
    return (await this.request('GET', path)).text();
  }
}

export async function failureFrom(response: Response): Promise<ApiFailure> {
  const text = await response.text();
  try {
    const body = JSON.parse(text) as { error?: { code?: string; message?: string; field?: string; details?: ApiFailure['details'] } };
    if (body.error?.message) {
      return new ApiFailure(response.status, body.error.code ?? 'error', body.error.message, body.error.field, body.error.details ?? []);
    }
  } catch {
    // not JSON: fall through
  }
  return new ApiFailure(response.status, `http_${response.status}`, `HTTP ${response.status}: ${text.slice(0, 200) || response.statusText}`);
}

/** Who is signed in, and through which door. */
export interface Signed {
  client: ApiClient;
  user: SessionUser | null;
  /** What the header shows: the user's email, or the label of the token. */
  label: string;
}

/** Signs in with email and password (POST /v1/session); the session cookie is HttpOnly. */
export async function signInWithPassword(email: string, password: string): Promise<Signed> {
  const response = await fetch('/v1/session', {
    method: 'POST',
    headers: { 'content-type': 'application/json', accept: 'application/json' },
    credentials: 'same-origin',
    body: JSON.stringify({ email, password }),
  });
  if (!response.ok) throw await failureFrom(response);
  const body = (await response.json()) as { user: SessionUser; csrfToken: string };
  return { client: new ApiClient({ kind: 'session', csrfToken: body.csrfToken }), user: body.user, label: body.user.email };
}

/** Picks up a session that is still open (GET /v1/session); null when there is none. */
export async function resumeSession(): Promise<Signed | null> {
  try {
    const response = await fetch('/v1/session', { headers: { accept: 'application/json' }, credentials: 'same-origin' });
    if (!response.ok) return null;
    const body = (await response.json()) as { user: SessionUser; csrfToken: string };
    return { client: new ApiClient({ kind: 'session', csrfToken: body.csrfToken }), user: body.user, label: body.user.email };
  } catch {
    return null;
  }
}

/** Signs in with an admin token (nva_...): checked by listing the tenant's datasets. */
export async function signInWithToken(token: string): Promise<Signed> {
  const trimmed = token.trim();
  if (!/^nva_\S+$/.test(trimmed)) throw new ApiFailure(400, 'token_format', 'an admin token starts with nva_', 'token');
  const client = new ApiClient({ kind: 'token', token: trimmed });
  await client.json('GET', '/v1/admin/datasets');
  return { client, user: null, label: 'admin token' };
}

export async function signOut(signed: Signed): Promise<void> {
  if (signed.client.auth.kind === 'session') {
    await signed.client.request('DELETE', '/v1/session').catch(() => undefined);
  }
}

/** May this person publish, roll back, manage keys and read statements? Editors may not. */
export function canAdminister(signed: Signed): boolean {
  return signed.user === null || signed.user.role !== 'tenant_editor';
}
