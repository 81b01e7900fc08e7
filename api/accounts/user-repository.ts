import { eq } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { tenants, users, type Role } from '../db/schema.ts';
import { ApiError } from '../http/api-error.ts';
import { hashPassword } from '../auth/password-hash.ts';

export type UserRow = typeof users.$inferSelect;

export function userView(row: UserRow, tenantSlug: string | null) {
  return { id: row.id, email: row.email, role: row.role, tenant: tenantSlug, createdAt: row.createdAt, disabledAt: row.disabledAt };
}

/** Adds a user; 409 when the email is taken (emails are unique across tenants). */
export async function insertUser(db: Database, values: { email: string; role: Role; tenantId: string | null; password: string }): Promise<UserRow> {
  const passwordHash = await hashPassword(values.password);
  const inserted = await db
    .insert(users)
    .values({ id: crypto.randomUUID(), email: values.email, role: values.role, tenantId: values.tenantId, passwordHash })
    .onConflictDoNothing({ target: users.email })
    .returning();
  if (inserted.length === 0) throw new ApiError(409, 'user_exists', `a user with email ${values.email} exists already`, 'email');
  return inserted[0]!;
}

export async function tenantSlugOf(db: Database, tenantId: string | null): Promise<string | null> {
  if (tenantId === null) return null;
  const [row] = await db.select({ slug: tenants.slug }).from(tenants).where(eq(tenants.id, tenantId));
  return row?.slug ?? null;
}
