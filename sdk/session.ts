import { send, type FetchLike, type SessionCredentials } from './http.ts';

/**
 * Signs a person in (POST /v1/session) for tools that act as them, such as the operator reading
 * any tenant's usage from the CLI (admin tokens always belong to one tenant). The cookie is kept
 * in memory only; end it with signOut.
 */
export async function signIn(endpoint: string, email: string, password: string, fetchLike?: FetchLike): Promise<SessionCredentials> {
  const response = await send({ endpoint, secret: '', ...(fetchLike ? { fetch: fetchLike } : {}) }, 'POST', 'v1/session', JSON.stringify({ email, password }), 'application/json');
  const cookie = response.headers.getSetCookie().map((c) => c.split(';')[0]!).find((c) => c.startsWith('nv_session='));
  const body = (await response.json()) as { csrfToken: string };
  if (!cookie) throw new Error('sign-in answered without a session cookie');
  return { cookie, csrfToken: body.csrfToken };
}

/** Ends the session (DELETE /v1/session). */
export async function signOut(endpoint: string, session: SessionCredentials, fetchLike?: FetchLike): Promise<void> {
  await send({ endpoint, secret: '', session, ...(fetchLike ? { fetch: fetchLike } : {}) }, 'DELETE', 'v1/session');
}
