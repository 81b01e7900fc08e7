import { env } from 'cloudflare:test';
import { beforeAll, describe, expect, it } from 'vitest';
import { rhodeIslandZipCsv } from './open-data-sites.ts';
import { adminRequest, createTestTenant, storedState, waitForVersion, type TestTenant } from './tenant-fixture.ts';
import { createTestUser, jsonRequest, sessionRequest, signIn, signInRequest, type TestSession } from './user-fixture.ts';

const smallCsv = rhodeIslandZipCsv().csv.split('\n').slice(0, 20).join('\n');

async function expectError(res: Response, status: number, code: string) {
  const body = (await res.json()) as { error?: { code: string; message: string } };
  expect({ status: res.status, code: body.error?.code }).toEqual({ status, code });
  expect(body.error!.message.length).toBeGreaterThan(5);
}

interface AuditLine {
  tenant: string | null;
  actor: { kind: string; label: string };
  action: string;
  target: string;
  detail: Record<string, unknown> | null;
  at: string;
}

async function audit(send: () => Promise<Response>): Promise<AuditLine[]> {
  const res = await send();
  expect(res.status).toBe(200);
  return ((await res.json()) as { events: AuditLine[] }).events;
}

describe('operator: tenants; admins: users; everyone: an audit trail of their tenant', () => {
  let operator: TestSession;
  let a: TestTenant;
  let b: TestTenant;
  let adminA: TestSession;
  let adminAEmail: string;

  beforeAll(async () => {
    operator = await signIn(await createTestUser(null, 'operator'));
    [a, b] = [await createTestTenant(), await createTestTenant()];
    const user = await createTestUser(a.tenantId, 'tenant_admin');
    adminAEmail = user.email;
    adminA = await signIn(user);
  });

  it('lets only the operator create and list tenants; the first admin gets a one-time password', async () => {
    const made = await jsonRequest(operator, 'POST', '/v1/operator/tenants', { slug: 'fenwick-clinics', name: 'Fenwick Clinics (invented)', admin: { email: 'Lead@Fenwick.example' } });
    expect(made.status).toBe(201);
    const body = (await made.json()) as { slug: string; admin: { email: string; role: string; initialPassword: string } };
    expect(body.slug).toBe('fenwick-clinics');
    expect(body.admin).toMatchObject({ email: 'lead@fenwick.example', role: 'tenant_admin' });
    expect(body.admin.initialPassword.length).toBeGreaterThanOrEqual(24);
    const signedIn = await signInRequest('lead@fenwick.example', body.admin.initialPassword);
    expect(signedIn.status).toBe(200);
    expect(((await signedIn.json()) as { user: { tenant: { slug: string } } }).user.tenant.slug).toBe('fenwick-clinics');

    const list = (await (await sessionRequest(operator, 'GET', '/v1/operator/tenants')).json()) as { tenants: Array<{ slug: string; users: number }> };
    expect(list.tenants.find((t) => t.slug === 'fenwick-clinics')).toMatchObject({ users: 1 });
    expect(list.tenants.map((t) => t.slug)).toEqual(expect.arrayContaining([a.slug, b.slug]));

    const before = await storedState();
    await expectError(await jsonRequest(operator, 'POST', '/v1/operator/tenants', { slug: 'fenwick-clinics', name: 'again' }), 409, 'tenant_exists');
    await expectError(await jsonRequest(operator, 'POST', '/v1/operator/tenants', { slug: 'Bad Slug', name: 'x' }), 400, 'invalid_body');
    // The admin's email is taken: no half-made tenant stays behind.
    await expectError(await jsonRequest(operator, 'POST', '/v1/operator/tenants', { slug: 'other-net', name: 'x', admin: { email: 'lead@fenwick.example' } }), 409, 'user_exists');
    await expectError(await jsonRequest(adminA, 'POST', '/v1/operator/tenants', { slug: 'sneaky', name: 'x' }), 403, 'role_forbidden');
    await expectError(await sessionRequest(adminA, 'GET', '/v1/operator/tenants'), 403, 'role_forbidden');
    await expectError(await adminRequest(a, 'GET', '/v1/operator/tenants'), 403, 'role_forbidden');
    expect(await storedState()).toBe(before);
  });

  it("lets a tenant admin manage its own tenant's users and never another's", async () => {
    const made = await jsonRequest(adminA, 'POST', '/v1/admin/users', { email: 'helper@a.example', role: 'tenant_editor', password: 'a long enough password' });
    expect(made.status).toBe(201);
    const editor = (await made.json()) as { id: string; tenant: string; initialPassword?: string };
    expect(editor.tenant).toBe(a.slug);
    expect(editor.initialPassword).toBeUndefined();

    const userOfB = await createTestUser(b.tenantId, 'tenant_editor');
    const listA = (await (await sessionRequest(adminA, 'GET', '/v1/admin/users')).json()) as { users: Array<{ id: string; tenant: string }> };
    expect(listA.users.map((u) => u.id)).toContain(editor.id);
    expect(listA.users.map((u) => u.id)).not.toContain(userOfB.id);
    expect(new Set(listA.users.map((u) => u.tenant))).toEqual(new Set([a.slug]));

    const before = await storedState();
    await expectError(await jsonRequest(adminA, 'PATCH', `/v1/admin/users/${userOfB.id}`, { disabled: true }), 404, 'user_unknown');
    await expectError(await sessionRequest(adminA, 'GET', `/v1/admin/users?tenant=${b.slug}`), 403, 'tenant_forbidden');
    await expectError(await jsonRequest(adminA, 'POST', '/v1/admin/users', { email: 'boss@a.example', role: 'operator', password: 'a long enough password' }), 403, 'role_forbidden');
    await expectError(await jsonRequest(adminA, 'POST', '/v1/admin/users', { email: 'short@a.example', role: 'tenant_editor', password: 'short' }), 400, 'invalid_body');
    await expectError(await jsonRequest(adminA, 'POST', '/v1/admin/users', { email: adminAEmail, role: 'tenant_editor' }), 409, 'user_exists');
    await expectError(await jsonRequest(adminA, 'PATCH', `/v1/admin/users/${listA.users.find((u) => u.id !== editor.id)!.id}`, { disabled: true }), 409, 'own_account');
    expect(await storedState()).toBe(before);

    // An editor manages nobody.
    const editorSession = await signIn({ email: 'helper@a.example', password: 'a long enough password' });
    await expectError(await sessionRequest(editorSession, 'GET', '/v1/admin/users'), 403, 'role_forbidden');
    // Disabling ends the editor's sessions at once.
    const off = await jsonRequest(adminA, 'PATCH', `/v1/admin/users/${editor.id}`, { disabled: true });
    expect(off.status).toBe(200);
    expect(((await off.json()) as { disabledAt: string | null }).disabledAt).not.toBeNull();
    await expectError(await sessionRequest(editorSession, 'GET', '/v1/admin/datasets'), 401, 'session_unknown');
    await expectError(await signInRequest('helper@a.example', 'a long enough password'), 401, 'login_failed');
  });

  it('lets the operator list every user or one tenant, and add users to a tenant it names', async () => {
    const all = (await (await sessionRequest(operator, 'GET', '/v1/admin/users')).json()) as { users: Array<{ tenant: string | null }> };
    expect(all.users.some((u) => u.tenant === a.slug) && all.users.some((u) => u.tenant === b.slug) && all.users.some((u) => u.tenant === null)).toBe(true);
    const onlyB = (await (await sessionRequest(operator, 'GET', `/v1/admin/users?tenant=${b.slug}`)).json()) as { users: Array<{ tenant: string }> };
    expect(new Set(onlyB.users.map((u) => u.tenant))).toEqual(new Set([b.slug]));
    await expectError(await jsonRequest(operator, 'POST', '/v1/admin/users', { email: 'x@b.example', role: 'tenant_admin' }), 400, 'tenant_required');
    const made = await jsonRequest(operator, 'POST', `/v1/admin/users?tenant=${b.slug}`, { email: 'x@b.example', role: 'tenant_admin' });
    expect(made.status).toBe(201);
    expect(((await made.json()) as { tenant: string }).tenant).toBe(b.slug);
  });

  it('records who created, uploaded, built, published and made or revoked keys, per tenant', async () => {
    expect((await jsonRequest(adminA, 'POST', '/v1/admin/datasets', { slug: 'audited' })).status).toBe(201);
    expect((await sessionRequest(adminA, 'POST', '/v1/admin/datasets/audited/versions', { body: smallCsv, contentType: 'text/csv' })).status).toBe(201);
    expect((await sessionRequest(adminA, 'POST', '/v1/admin/datasets/audited/versions/1/build')).status).toBe(202);
    expect((await waitForVersion(a, 'audited', 1)).author).toBe(adminAEmail);
    expect((await sessionRequest(adminA, 'POST', '/v1/admin/datasets/audited/versions/1/publish')).status).toBe(200);
    const key = (await (await adminRequest(a, 'POST', '/v1/admin/keys', JSON.stringify({ label: 'audited app' }), 'application/json')).json()) as { id: string };
    expect((await adminRequest(a, 'POST', `/v1/admin/keys/${key.id}/revoke`)).status).toBe(200);
    await adminRequest(b, 'POST', '/v1/admin/datasets', JSON.stringify({ slug: 'b-only' }), 'application/json');

    const linesA = await audit(() => sessionRequest(adminA, 'GET', '/v1/admin/audit'));
    const actions = linesA.map((l) => `${l.action} ${l.target}`);
    expect(actions).toEqual(
      expect.arrayContaining([
        'dataset.create dataset audited',
        'version.upload dataset audited v1',
        'version.build dataset audited v1',
        'version.publish dataset audited v1',
        `key.create key ${key.id}`,
        `key.revoke key ${key.id}`,
        'user.create user helper@a.example',
        'user.update user helper@a.example',
      ]),
    );
    // Newest first, with who did it: a signed-in user or the admin token's label.
    expect(linesA[0]!.action).toBe('key.revoke');
    expect(linesA[0]!.actor).toMatchObject({ kind: 'credential', label: 'test admin' });
    expect(linesA.find((l) => l.action === 'version.publish')!.actor).toMatchObject({ kind: 'user', label: adminAEmail });
    expect(new Set(linesA.map((l) => l.tenant))).toEqual(new Set([a.slug]));
    expect(actions).not.toContain('dataset.create dataset b-only');

    // Tenant B's admin token sees B only; naming A is refused.
    const linesB = await audit(() => adminRequest(b, 'GET', '/v1/admin/audit'));
    expect(linesB.map((l) => l.target)).toContain('dataset b-only');
    expect(linesB.map((l) => l.target)).not.toContain('dataset audited');
    await expectError(await adminRequest(b, 'GET', `/v1/admin/audit?tenant=${a.slug}`), 403, 'tenant_forbidden');

    // The operator reads everything, or one tenant.
    const everything = await audit(() => sessionRequest(operator, 'GET', '/v1/admin/audit?limit=500'));
    expect(everything.some((l) => l.tenant === a.slug) && everything.some((l) => l.tenant === b.slug)).toBe(true);
    const onlyA = await audit(() => sessionRequest(operator, 'GET', `/v1/admin/audit?tenant=${a.slug}`));
    expect(onlyA.map((l) => l.target)).toEqual(linesA.map((l) => l.target));
  });

  it('pages the audit trail with a cursor and refuses bad paging input; editors cannot read it', async () => {
    const first = (await (await sessionRequest(adminA, 'GET', '/v1/admin/audit?limit=3')).json()) as { events: AuditLine[]; next: string };
    expect(first.events).toHaveLength(3);
    const second = (await (await sessionRequest(adminA, 'GET', `/v1/admin/audit?limit=3&before=${encodeURIComponent(first.next)}`)).json()) as { events: AuditLine[] };
    const all = await audit(() => sessionRequest(adminA, 'GET', '/v1/admin/audit'));
    expect([...first.events, ...second.events].map((e) => e.target)).toEqual(all.slice(0, 6).map((e) => e.target));
    await expectError(await sessionRequest(adminA, 'GET', '/v1/admin/audit?limit=0'), 400, 'invalid_limit');
    await expectError(await sessionRequest(adminA, 'GET', '/v1/admin/audit?before=nonsense'), 400, 'invalid_before');
    await expectError(await sessionRequest(adminA, 'GET', '/v1/admin/audit?limit=501'), 400, 'invalid_limit');
    const editor = await signIn(await createTestUser(a.tenantId, 'tenant_editor'));
    await expectError(await sessionRequest(editor, 'GET', '/v1/admin/audit'), 403, 'role_forbidden');
    const rows = await env.DB.prepare('SELECT count(*) AS n FROM audit_events WHERE tenant_id = ?').bind(a.tenantId).first<{ n: number }>();
    expect(rows!.n).toBe(all.length);
  });
});
