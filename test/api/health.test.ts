import { exports } from 'cloudflare:workers';
import { describe, expect, it } from 'vitest';

describe('health and unknown routes', () => {
  it('answers /healthz', async () => {
    const res = await exports.default.fetch('http://nearveil.test/healthz');
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ ok: true });
  });

  it('answers an unknown route with a JSON 404 naming it', async () => {
    const res = await exports.default.fetch('http://nearveil.test/v1/nothing-here');
    expect(res.status).toBe(404);
    expect(await res.json()).toMatchObject({ error: { code: 'route_unknown' } });
  });
});
