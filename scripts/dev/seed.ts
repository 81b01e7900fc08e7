import { createHash, randomBytes, randomUUID } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { hashPassword, verifyPassword } from '../../api/auth/password-hash.ts';
import { CREDENTIALS_FILE, type DevCredentials } from '../../sdk/cli/dev-home.ts';
import { sqlText } from '../../sdk/cli/wrangler-d1.ts';
import { localSql } from './wrangler.ts';

export const DEMO_TENANT = 'demo';
export const DEMO_DATASET = 'harrow-vale-care';

const secret = (prefix: string) => prefix + randomBytes(32).toString('base64url');
const sha256 = (s: string) => createHash('sha256').update(s).digest('hex');

/**
 * Makes sure the local database has the demo tenant and that the credentials file matches it.
 * Reuses saved credentials while they still exist in the database; otherwise creates new ones
 * (the database keeps only their hashes, so lost secrets cannot be recovered, only replaced).
 */
export function ensureDemoTenant(persistTo: string, home: string, endpoint: string): DevCredentials {
  const path = join(home, CREDENTIALS_FILE);
  const saved = existsSync(path) ? (JSON.parse(readFileSync(path, 'utf8')) as Partial<DevCredentials>) : {};
  if (saved.adminToken && saved.apiKey) {
    const hashes = [sha256(saved.adminToken), sha256(saved.apiKey)].map(sqlText).join(',');
    const found = localSql(persistTo, `SELECT count(*) AS n FROM credentials WHERE revoked_at IS NULL AND secret_hash IN (${hashes})`);
    if (Number(found[0]?.n) === 2) return { ...(saved as DevCredentials), endpoint };
  }
  const tenantRows = localSql(persistTo, `SELECT id FROM tenants WHERE slug = ${sqlText(DEMO_TENANT)}`);
  const tenantId = (tenantRows[0]?.id as string | undefined) ?? randomUUID();
  const adminToken = secret('nva_');
  const apiKey = secret('nvk_');
  localSql(
    persistTo,
    [
      `INSERT OR IGNORE INTO tenants (id, slug, name) VALUES (${sqlText(tenantId)}, ${sqlText(DEMO_TENANT)}, 'Harrow Vale Care Network (demo)')`,
      `INSERT INTO credentials (id, tenant_id, kind, secret_hash, label) VALUES (${sqlText(randomUUID())}, ${sqlText(tenantId)}, 'admin', ${sqlText(sha256(adminToken))}, 'dev admin token')`,
      `INSERT INTO credentials (id, tenant_id, kind, secret_hash, label) VALUES (${sqlText(randomUUID())}, ${sqlText(tenantId)}, 'query', ${sqlText(sha256(apiKey))}, 'dev API key')`,
    ].join('; '),
  );
  return { endpoint, tenant: DEMO_TENANT, adminToken, apiKey, demoDataset: DEMO_DATASET };
}

/**
 * Invented demo prices (micro-units of BILLING_CURRENCY), so the console's cost screen and the
 * monthly statement have a tariff to show. Set once, from the month of the first start; a tariff
 * the operator set later is never touched.
 */
export const DEMO_TARIFF = { queryMicros: 1_500, gbMicros: 90_000, millionMultiplicationsMicros: 2_500, monthlyBaseMicros: 49_990_000 };

export function ensureDemoTariff(persistTo: string, now = new Date()): void {
  const t = DEMO_TARIFF;
  const month = sqlText(now.toISOString().slice(0, 7));
  localSql(
    persistTo,
    `INSERT INTO tariffs (tenant_id, from_month, query_micros, gb_micros, million_multiplications_micros, monthly_base_micros, set_by)
     SELECT id, ${month}, ${t.queryMicros}, ${t.gbMicros}, ${t.millionMultiplicationsMicros}, ${t.monthlyBaseMicros}, 'demo seed'
     FROM tenants WHERE slug = ${sqlText(DEMO_TENANT)} AND NOT EXISTS (SELECT 1 FROM tariffs WHERE tariffs.tenant_id = tenants.id)`,
  );
}

export interface DevUser {
  email: string;
  password: string;
  role: 'operator' | 'tenant_admin' | 'tenant_editor';
}

/** The operator and the demo tenant's admin and editor; emails on the reserved .invalid TLD (RFC 2606). */
const DEV_USERS: ReadonlyArray<{ name: 'operator' | 'tenantAdmin' | 'tenantEditor'; email: string; role: DevUser['role'] }> = [
  { name: 'operator', email: 'operator@nearveil.invalid', role: 'operator' },
  { name: 'tenantAdmin', email: 'admin@harrow-vale.invalid', role: 'tenant_admin' },
  { name: 'tenantEditor', email: 'editor@harrow-vale.invalid', role: 'tenant_editor' },
];

/**
 * Makes sure the three dev users exist and that their saved passwords still sign in; a user
 * missing from the database, or whose saved password no longer fits, gets a new random password.
 */
export async function ensureDevUsers(persistTo: string, saved: Partial<Record<string, DevUser>> = {}): Promise<Record<string, DevUser>> {
  const tenantId = localSql(persistTo, `SELECT id FROM tenants WHERE slug = ${sqlText(DEMO_TENANT)}`)[0]?.id as string;
  const out: Record<string, DevUser> = {};
  for (const spec of DEV_USERS) {
    const [row] = localSql(persistTo, `SELECT password_hash FROM users WHERE email = ${sqlText(spec.email)} AND disabled_at IS NULL`);
    const kept = saved[spec.name];
    if (row && kept?.email === spec.email && (await verifyPassword(kept.password, String(row.password_hash))).ok) {
      out[spec.name] = kept;
      continue;
    }
    const password = randomBytes(18).toString('base64url');
    const hash = await hashPassword(password);
    const tenant = spec.role === 'operator' ? 'NULL' : sqlText(tenantId);
    localSql(
      persistTo,
      `INSERT INTO users (id, tenant_id, email, role, password_hash) VALUES (${sqlText(randomUUID())}, ${tenant}, ${sqlText(spec.email)}, ${sqlText(spec.role)}, ${sqlText(hash)}) ` +
        `ON CONFLICT(email) DO UPDATE SET password_hash = excluded.password_hash, role = excluded.role, tenant_id = excluded.tenant_id, disabled_at = NULL`,
    );
    out[spec.name] = { email: spec.email, password, role: spec.role };
  }
  return out;
}
