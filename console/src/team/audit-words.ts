import type { AuditLine } from '../api/nearveil.ts';

/** Audit action codes (api/audit: `<object>.<verb>`) in words; an unknown code is shown as it is. */
const ACTION_WORDS: Readonly<Record<string, string>> = {
  'dataset.create': 'Created a dataset',
  'dataset.rename': 'Renamed a dataset',
  'dataset.delete': 'Deleted a dataset',
  'version.upload': 'Saved a new version',
  'version.build': 'Started a build',
  'version.publish': 'Published a version',
  'version.rollback': 'Rolled back to a version',
  'key.create': 'Created an API key',
  'key.revoke': 'Revoked an API key',
  'key.update': "Changed a web-page key's origins or rate",
  'finder.enable': 'Switched on or changed a finder page',
  'finder.disable': 'Switched off a finder page',
  'tenant.create': 'Created a tenant',
  'tariff.set': 'Set a tariff',
  'user.create': 'Added a person',
  'user.update': 'Changed a person',
  'user.password': 'Changed their own password',
};

const ROLE_WORDS: Readonly<Record<string, string>> = { tenant_admin: 'admin', tenant_editor: 'editor', operator: 'operator' };

/** What was done, in words: "Revoked an API key", "Made editor", "Disabled a person". */
export function actionWords(line: Pick<AuditLine, 'action' | 'detail'>): string {
  const detail = line.detail ?? {};
  if (line.action === 'user.update') {
    const parts: string[] = [];
    const role = detail.role;
    if (Array.isArray(role) && typeof role[1] === 'string') parts.push(`Made ${ROLE_WORDS[role[1]] ?? role[1]}`);
    if (detail.disabled === true) parts.push('Disabled a person');
    if (detail.disabled === false) parts.push('Enabled a person');
    if (detail.passwordReset === true) parts.push('Gave a new password');
    if (parts.length > 0) return parts.join('; ');
  }
  if (line.action === 'user.create' && typeof detail.role === 'string') return `Added a person as ${ROLE_WORDS[detail.role] ?? detail.role}`;
  return ACTION_WORDS[line.action] ?? line.action;
}

/**
 * Which object, in words: an API key by its label instead of its id ("key 5f0e..." becomes
 * "API key “clinic finder”"), everything else as the server wrote it ("dataset north-clinics v3").
 */
export function targetWords(line: Pick<AuditLine, 'action' | 'target' | 'detail'>, keyLabels: ReadonlyMap<string, string>): string {
  const key = /^key (\S+)$/.exec(line.target);
  if (key) {
    const label = keyLabels.get(key[1]!) ?? (line.action === 'key.create' && typeof line.detail?.label === 'string' ? line.detail.label : null);
    return label === null ? 'an API key no longer listed' : `API key “${label}”`;
  }
  const user = /^user (.+)$/.exec(line.target);
  return user ? user[1]! : line.target;
}
