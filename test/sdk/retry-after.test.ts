import { describe, expect, it } from 'vitest';
import { NearveilError, retryAfterFrom, send } from '../../sdk/http.ts';

describe('Retry-After on refusals', () => {
  it('reads the delay-seconds form and leaves the HTTP-date form alone (RFC 9110 section 10.2.3 examples)', () => {
    // The RFC's two examples: "Retry-After: Fri, 31 Dec 1999 23:59:59 GMT" and "Retry-After: 120".
    expect(retryAfterFrom('120')).toBe(120);
    expect(retryAfterFrom('Fri, 31 Dec 1999 23:59:59 GMT')).toBeNull();
    expect(retryAfterFrom(null)).toBeNull();
    for (const bad of ['', '-5', '1.5', '12s', '9999999999']) expect(retryAfterFrom(bad), bad).toBeNull();
  });

  it('puts the seconds on the NearveilError of a 429, and null when none were sent', async () => {
    const refusal = (headers: Record<string, string>) => async () =>
      new Response(JSON.stringify({ error: { code: 'rate_limited', message: 'too many requests', field: 'requestsPerMinute' } }), { status: 429, headers: { 'content-type': 'application/json', ...headers } });
    const caught = async (fetch: () => Promise<Response>) => send({ endpoint: 'http://127.0.0.1:1', secret: 'nvk_x', fetch }, 'GET', 'v1/datasets/x/manifest').catch((err: unknown) => err);
    const withWait = await caught(refusal({ 'retry-after': '17' }));
    expect(withWait).toBeInstanceOf(NearveilError);
    expect(withWait).toMatchObject({ status: 429, code: 'rate_limited', field: 'requestsPerMinute', retryAfterSeconds: 17 });
    expect(await caught(refusal({}))).toMatchObject({ code: 'rate_limited', retryAfterSeconds: null });
  });
});
