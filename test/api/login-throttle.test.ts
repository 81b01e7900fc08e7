import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { lockAfterFailure, THROTTLE, throttleKeys } from '../../api/auth/login-throttle.ts';
import { createTestTenant } from './tenant-fixture.ts';
import { createTestUser, randomAddress, signInRequest, type TestUser } from './user-fixture.ts';

async function outcome(res: Response) {
  const body = (await res.json()) as { error?: { code: string; message: string } };
  return { status: res.status, code: body.error?.code, message: body.error?.message, retryAfter: res.headers.get('retry-after') };
}

describe('growing delays after failed sign-ins', () => {
  let user: TestUser;

  beforeAll(async () => {
    user = await createTestUser((await createTestTenant()).tenantId, 'tenant_admin');
  });

  it('doubles the lock after the free failures, from 2 s up to a 15 minute cap', () => {
    const free = THROTTLE.email.free;
    expect([1, 2, 3].map((n) => lockAfterFailure(n, free))).toEqual([0, 0, 0]);
    expect([4, 5, 6, 7].map((n) => lockAfterFailure(n, free))).toEqual([2_000, 4_000, 8_000, 16_000]);
    expect(lockAfterFailure(40, free)).toBe(15 * 60 * 1000);
    expect(lockAfterFailure(10_000, free)).toBe(15 * 60 * 1000);
  });

  it('answers an unknown email exactly like a wrong password', async () => {
    const wrong = await outcome(await signInRequest(user.email, 'not-the-password'));
    const unknown = await outcome(await signInRequest('nobody-' + crypto.randomUUID().slice(0, 8) + '@example.test', 'not-the-password'));
    expect(wrong).toEqual({ status: 401, code: 'login_failed', message: unknown.message, retryAfter: null });
    expect(unknown.code).toBe('login_failed');
  });

  it('locks an email after repeated failures (429 with Retry-After, even for the right password), then lets it in', async () => {
    const target = await createTestUser(null, 'operator');
    // Each attempt from a new address: the lock follows the email.
    for (let i = 0; i < THROTTLE.email.free; i++) {
      expect((await outcome(await signInRequest(target.email, 'wrong-' + i))).status).toBe(401);
    }
    const fourth = await outcome(await signInRequest(target.email, 'wrong-again'));
    expect(fourth.status).toBe(401);
    const locked = await outcome(await signInRequest(target.email, target.password));
    expect(locked.status).toBe(429);
    expect(locked.code).toBe('login_throttled');
    expect(Number(locked.retryAfter)).toBeGreaterThanOrEqual(1);
    expect(Number(locked.retryAfter)).toBeLessThanOrEqual(2);
    await new Promise((r) => setTimeout(r, 2_100));
    expect((await signInRequest(target.email, target.password)).status).toBe(200);
    // A good sign-in clears the email's counter.
    const keys = await throttleKeys(target.email, 'any');
    expect(await env.DB.prepare('SELECT 1 FROM login_throttle WHERE key = ?').bind(keys.email).first()).toBeNull();
  });

  it('locks an unknown email the same way, so throttling reveals no account', async () => {
    const ghost = 'ghost-' + crypto.randomUUID().slice(0, 8) + '@example.test';
    for (let i = 0; i <= THROTTLE.email.free; i++) expect((await signInRequest(ghost, 'guess-' + i)).status).toBe(401);
    const locked = await outcome(await signInRequest(ghost, 'guess'));
    expect({ status: locked.status, code: locked.code }).toEqual({ status: 429, code: 'login_throttled' });
  });

  it('locks a client address after many failures across emails, without touching other addresses', async () => {
    const address = randomAddress();
    // Stand in for THROTTLE.address.free + 1 failures (each a 0.2 s hash) by writing the counter they leave.
    const keys = await throttleKeys('unused@example.test', address);
    const failures = THROTTLE.address.free + 1;
    await env.DB.prepare('INSERT INTO login_throttle (key, failures, last_failure_at, locked_until) VALUES (?, ?, ?, ?)')
      .bind(keys.address, failures, Date.now(), Date.now() + lockAfterFailure(failures, THROTTLE.address.free))
      .run();
    const fromThere = await outcome(await signInRequest(user.email, user.password, address));
    expect({ status: fromThere.status, code: fromThere.code }).toEqual({ status: 429, code: 'login_throttled' });
    expect((await signInRequest(user.email, user.password, randomAddress())).status).toBe(200);
  });

  it('counts a failure on the address too, and a stale counter starts over', async () => {
    const address = randomAddress();
    const keys = await throttleKeys(user.email, address);
    await env.DB.prepare('INSERT INTO login_throttle (key, failures, last_failure_at, locked_until) VALUES (?, 9, ?, 0)')
      .bind(keys.address, Date.now() - THROTTLE.forgetAfterMs - 1000)
      .run();
    expect((await signInRequest(user.email, 'wrong', address)).status).toBe(401);
    const row = await env.DB.prepare('SELECT failures FROM login_throttle WHERE key = ?').bind(keys.address).first<{ failures: number }>();
    expect(row!.failures).toBe(1);
  });
});
