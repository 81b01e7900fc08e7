import { canAdminister } from '../api/client.ts';
import type { AuditLine, Role, UserInfo } from '../api/nearveil.ts';
import { confirmAction } from '../ui/ask-dialog.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { errorText, h, onSubmit, plainTable, setStatus } from '../ui/dom.ts';
import { actionWords, targetWords } from './audit-words.ts';

/** 18 random bytes as base64url: 24 characters, 144 bits (the server asks for at least 12 characters). */
function randomPassword(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(18));
  return btoa(String.fromCharCode(...bytes)).replace(/\+/g, '-').replace(/\//g, '_');
}

/** The least role first: a new person is an editor unless the admin chooses otherwise. */
const ROLE_NAMES: Record<Exclude<Role, 'operator'>, string> = { tenant_editor: 'editor', tenant_admin: 'admin' };

/** The tenant's people and its audit trail: who may do what, and who did what when. */
export function teamScreen(ctx: ConsoleContext): Screen {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const email = h('input', { id: 'user-email', type: 'email', required: true, maxlength: 254, placeholder: 'name@example.org' }) as HTMLInputElement;
  const role = h('select', { id: 'user-role' }, ...Object.entries(ROLE_NAMES).map(([value, label]) => h('option', { value }, label))) as HTMLSelectElement;
  role.value = 'tenant_editor';
  const passwordBox = h('div', { id: 'user-password', 'aria-live': 'polite' });
  const usersBody = h('tbody', {});
  const auditBody = h('tbody', {});
  const older = h('button', { type: 'button', hidden: true, onclick: () => void loadAudit(false) }, 'Older entries') as HTMLButtonElement;
  let next: string | null = null;
  let keyLabels = new Map<string, string>();

  const form = h(
    'form',
    { class: 'toolbar', 'aria-label': 'Add a user' },
    h('label', { for: 'user-email' }, 'Email ', email),
    h('label', { for: 'user-role' }, 'Role ', role),
    h('button', { type: 'submit', class: 'primary' }, 'Add user'),
  );
  onSubmit(form, addUser);

  const peoplePanel = h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'People'),
      h('p', { class: 'grid-note' }, 'Editors edit, upload and build; admins also publish, roll back, manage keys and people, and read statements and the activity below.'),
      form,
      passwordBox,
      h('div', { class: 'table-scroll' }, plainTable('users-table', ['Email', 'Role', 'Added', 'State', ''], usersBody)),
  );
  const activityPanel = h(
    'div',
    { class: 'panel' },
    h('h2', {}, 'Activity'),
    h('div', { class: 'table-scroll' }, plainTable('audit-table', ['When (UTC)', 'Who', 'What', 'Which'], auditBody)),
    older,
  );
  /** What an editor sees instead: who does what here, in plain words. */
  const editorPanel = h(
    'div',
    { class: 'panel', id: 'team-for-editors' },
    h('h2', {}, 'People'),
    h('p', {}, 'Your tenant\'s admins add people, change their roles and read the activity log. As an editor you edit site tables, save versions and build them; an admin publishes them.'),
    h('p', {}, 'To change your own password, use Password… at the top.'),
  );
  const element = h('section', { 'aria-label': 'Team and activity' }, status, peoplePanel, activityPanel, editorPanel);

  async function loadUsers(): Promise<void> {
    try {
      const users = await ctx.api.users();
      usersBody.replaceChildren(...users.map(userRow));
    } catch (err) {
      usersBody.replaceChildren(h('tr', {}, h('td', { colspan: 5 }, errorText(err))));
    }
  }

  function userRow(u: UserInfo): HTMLElement {
    const self = ctx.signed.user?.id === u.id;
    const actions = h('td', {});
    if (!self && u.role !== 'operator') {
      const other: Role = u.role === 'tenant_admin' ? 'tenant_editor' : 'tenant_admin';
      actions.append(
        h('button', { type: 'button', onclick: () => void change(u, { role: other }, `${u.email} is now ${ROLE_NAMES[other]}`) }, `Make ${u.email} ${ROLE_NAMES[other]}`),
        ' ',
        u.disabledAt
          ? h('button', { type: 'button', onclick: () => void change(u, { disabled: false }, `Enabled ${u.email}`) }, `Enable ${u.email}`)
          : h('button', { type: 'button', class: 'danger', onclick: () => void disable(u) }, `Disable ${u.email}`),
        ' ',
        h('button', { type: 'button', onclick: () => void resetPassword(u) }, `New password for ${u.email}`),
      );
    }
    return h(
      'tr',
      { 'data-user': u.email },
      h('td', {}, u.email, self ? ' (you)' : ''),
      h('td', { class: 'role' }, u.role === 'operator' ? 'operator' : ROLE_NAMES[u.role]),
      h('td', {}, u.createdAt.slice(0, 10)),
      h('td', { class: 'user-state' }, u.disabledAt ? `disabled ${u.disabledAt.slice(0, 10)}` : 'active'),
      actions,
    );
  }

  async function addUser(): Promise<void> {
    try {
      const made = await ctx.api.createUser({ email: email.value, role: role.value as Role });
      passwordBox.replaceChildren(
        made.initialPassword
          ? h('p', {}, `Added ${made.email}. Their first password, shown only now: `, h('code', { id: 'new-user-password' }, made.initialPassword), '. Pass it on privately; they change it with Password… at the top once signed in.')
          : h('p', {}, `Added ${made.email}.`),
      );
      email.value = '';
      say(`Added ${made.email} as ${ROLE_NAMES[made.role as keyof typeof ROLE_NAMES] ?? made.role}`, 'good');
      await Promise.all([loadUsers(), loadAudit(true)]);
    } catch (err) {
      say(`User not added: ${errorText(err)}`, 'bad');
    }
  }

  async function disable(u: UserInfo): Promise<void> {
    const sure = await confirmAction({
      title: `Disable ${u.email}?`,
      message: `${u.email} is signed out at once and cannot sign in until an admin enables them again. Their work stays.`,
      confirmLabel: `Disable ${u.email}`,
      danger: true,
    });
    if (!sure) return;
    await change(u, { disabled: true }, `Disabled ${u.email}`);
  }

  /** For someone who lost theirs: a random password, shown once; their sessions end. */
  async function resetPassword(u: UserInfo): Promise<void> {
    const sure = await confirmAction({
      title: `New password for ${u.email}?`,
      message: `Their current password stops working and they are signed out. The new one is shown here once, for you to pass on privately.`,
      confirmLabel: 'Make a new password',
      danger: true,
    });
    if (!sure) return;
    const password = randomPassword();
    if (!(await change(u, { password }, `${u.email} has a new password`))) return;
    passwordBox.replaceChildren(h('p', {}, `${u.email}'s new password, shown only now: `, h('code', { id: 'reset-user-password' }, password), '. Pass it on privately.'));
  }

  /** Applies a change to a person; false (and the reason shown) when the server refused it. */
  async function change(u: UserInfo, what: { role?: Role; disabled?: boolean; password?: string }, done: string): Promise<boolean> {
    try {
      await ctx.api.updateUser(u.id, what);
      say(done, 'good');
      await Promise.all([loadUsers(), loadAudit(true)]);
      return true;
    } catch (err) {
      say(errorText(err), 'bad');
      return false;
    }
  }

  /** First page (`fresh`) or the next older one. */
  async function loadAudit(fresh: boolean): Promise<void> {
    try {
      // Keys are named by id in the log: their labels read better (revoked keys stay listed).
      if (fresh) keyLabels = new Map((await ctx.api.keys().catch(() => [])).map((k) => [k.id, k.label]));
      const page = await ctx.api.audit(fresh ? null : next);
      next = page.next;
      const rows = page.events.map(auditRow);
      if (fresh) auditBody.replaceChildren(...rows);
      else auditBody.append(...rows);
      older.hidden = next === null;
    } catch (err) {
      auditBody.replaceChildren(h('tr', {}, h('td', { colspan: 4 }, errorText(err))));
      older.hidden = true;
    }
  }

  function auditRow(e: AuditLine): HTMLElement {
    return h(
      'tr',
      {},
      h('td', {}, e.at.replace('T', ' ').slice(0, 19)),
      h('td', {}, e.actor.label),
      h('td', { class: 'action', title: e.action }, actionWords(e)),
      h('td', { class: 'target' }, targetWords(e, keyLabels)),
    );
  }

  return {
    element,
    show() {
      const admin = canAdminister(ctx.signed);
      peoplePanel.hidden = !admin;
      activityPanel.hidden = !admin;
      editorPanel.hidden = admin;
      if (!admin) return say('People and activity are for tenant admins; ask one of them for changes.');
      void loadUsers();
      void loadAudit(true);
    },
  };
}
