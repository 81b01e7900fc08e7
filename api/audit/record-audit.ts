import type { Context } from 'hono';
import { database } from '../db/client.ts';
import { auditEvents } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';

export interface AuditEntry {
  /** What was done, as "<object>.<verb>": dataset.create, version.publish, key.revoke, ... */
  action: string;
  /** Which object, in words a reader can find again: "dataset harrow-vale-care v3", "key 5f0e...". */
  target: string;
  /** Anything else worth keeping (small JSON): labels, previous values, options. */
  detail?: Record<string, unknown>;
  /** The tenant the action concerns; by default the one the request acts on (null: operator-wide). */
  tenantId?: string | null;
}

/**
 * Adds one line to the audit log: who (the request's principal, set by requireRole), what,
 * which object, when. Call it after the change succeeded, from any admin route.
 */
export async function recordAudit(c: Context<AppBindings>, entry: AuditEntry): Promise<void> {
  const principal = c.get('principal');
  if (!principal) throw new Error('recordAudit: the route has no principal (use requireRole first)');
  const tenantId = entry.tenantId !== undefined ? entry.tenantId : (c.get('tenantScope') ?? principal.tenantId ?? null);
  await database(c.env)
    .insert(auditEvents)
    .values({
      id: crypto.randomUUID(),
      tenantId,
      actorKind: principal.kind,
      actorId: principal.id,
      actorLabel: principal.label,
      action: entry.action,
      target: entry.target,
      detail: entry.detail === undefined ? null : JSON.stringify(entry.detail),
    });
}
