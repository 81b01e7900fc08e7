import { env } from 'cloudflare:test';
import { hashPassword } from '../../api/auth/password-hash.ts';
import { BASE, worker } from './tenant-fixture.ts';

export interface TestUser {
  id: string;
  email: string;
  password: string;
}

export interface TestSession {
  cookie: string;
  csrfToken: string;
}

/** A user written straight into D1 with a real hash at today's scrypt cost (about 0.4 s each here). */
export async function createTestUser(tenantId: string | null, role: 'operator' | 'tenant_admin' | 'tenant_editor'): Promise<TestUser> {
  const id = crypto.randomUUID();
  const email = `${role.replace('_', '-')}-${id.slice(0, 8)}@example.test`;
  const password = 'pw-' + crypto.randomUUID();
  await env.DB.prepare('INSERT INTO users (id, tenant_id, email, role, password_hash) VALUES (?, ?, ?, ?, ?)')
    .bind(id, tenantId, email, role, await hashPassword(password))
    .run();
  return { id, email, password };
}

export function signInRequest(email: string, password: string, address = randomAddress()): Promise<Response> {
  return worker(`${BASE}/v1/session`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'cf-connecting-ip': address },
    body: JSON.stringify({ email, password }),
  });
}

/** Signs in and returns the session cookie (name=value) and CSRF token; throws if refused. */
export async function signIn(user: { email: string; password: string }): Promise<TestSession> {
  const res = await signInRequest(user.email, user.password);
  if (res.status !== 200) throw new Error(`sign-in failed: ${res.status} ${await res.text()}`);
  const setCookie = res.headers.get('set-cookie') ?? '';
  const body = (await res.json()) as { csrfToken: string };
  return { cookie: setCookie.split(';')[0]!, csrfToken: body.csrfToken };
}

/** A cookie-authenticated request; `csrf` null sends no CSRF header. */
export function sessionRequest(
  session: TestSession,
  method: string,
  path: string,
  options: { body?: BodyInit; contentType?: string; csrf?: string | null } = {},
): Promise<Response> {
  const headers: Record<string, string> = { cookie: session.cookie };
  const csrf = options.csrf === undefined ? session.csrfToken : options.csrf;
  if (csrf !== null) headers['x-nearveil-csrf'] = csrf;
  if (options.contentType) headers['content-type'] = options.contentType;
  return worker(`${BASE}${path}`, { method, headers, ...(options.body === undefined ? {} : { body: options.body }) });
}

export function jsonRequest(session: TestSession, method: string, path: string, body: unknown, csrf?: string | null): Promise<Response> {
  return sessionRequest(session, method, path, { body: JSON.stringify(body), contentType: 'application/json', ...(csrf === undefined ? {} : { csrf }) });
}

/** A random documentation address (RFC 3849, 2001:db8::/32), so tests never share an address throttle. */
export function randomAddress(): string {
  const n = crypto.getRandomValues(new Uint8Array(2));
  return `2001:db8::${n[0]!.toString(16)}:${n[1]!.toString(16)}`;
}
