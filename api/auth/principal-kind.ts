import type { Role } from '../db/schema.ts';

/** Who is calling an admin route: a signed-in user, or an admin token acting as its tenant's admin. */
export interface Principal {
  kind: 'user' | 'credential';
  id: string;
  role: Role;
  /** null only for the operator, who belongs to no tenant. */
  tenantId: string | null;
  tenantSlug: string | null;
  /** The user's email or the credential's label, for audit lines and messages. */
  label: string;
}
