import { canAdminister } from '../api/client.ts';
import type { AuditLine, Role, UserInfo } from '../api/nearveil.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { errorText, h, onSubmit, plainTable, setStatus } from '../ui/dom.ts';

/** 18 random bytes as base64url: 24 characters, 144 bits (the server asks for at least 12 characters). */
function randomPassword(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(18));
  return btoa(String.fromCharCode(...bytes)).replace(/\+/g, '-').replace(/\//g, '_');
}

const ROLE_NAMES: Record<Exclude<Role, 'operator'>, string> = { tenant_admin: 'admin', tenant_editor: 'editor' };

/** The tenant's people and its audit trail: who may do what, and who did what when. */
export function teamScreen(ctx: ConsoleContext): Screen {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const email = h('input', { id: 'user-email', type: 'email', required: true, maxlength: 254, placeholder: 'name@example.org' }) as HTMLInputElement;
  const role = h('select', { id: 'user-role' }, ...Object.entries(ROLE_NAMES).map(([value, label]) => h('option', { value }, label))) as HTMLSelectElement;
  const passwordBox = h('div', { id: 'user-password', 'aria-live': 'polite' });
  const usersBody = h('tbody', {});
  const auditBody = h('tbody', {});
  const older = h('button', { type: 'button', hidden: true, onclick: () => void loadAudit(false) }, 'Older entries') as HTMLButtonElement;
  let next: string | null = null;

  const form = h(
    'form',
    { class: 'toolbar', 'aria-label': 'Add a user' },
    h('label', { for: 'user-email' }, 'Email ', email),
    h('label', { for: 'user-role' }, 'Role ', role),
    h('button', { type: 'submit', class: 'primary' }, 'Add user'),
  );
  onSubmit(form, addUser);

  const element = h(
    'section',
    { 'aria-label': 'Team and activity' },
    status,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'People'),
      h('p', { class: 'grid-note' }, 'Editors edit, upload and build; admins also publish, roll back, manage keys and people, and read statements and the activity below.'),
      form,
      passwordBox,
      plainTable('users-table', ['Email', 'Role', 'Added', 'State', ''], usersBody),
    ),
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Activity'),
      plainTable('audit-table', ['When (UTC)', 'Who', 'What', 'Which'], auditBody),
      older,
    ),
  );

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
    if (!window.confirm(`Disable ${u.email}? They are signed out at once and cannot sign in until enabled again.`)) return;
    await change(u, { disabled: true }, `Disabled ${u.email}`);
  }

  /** For someone who lost theirs: a random password, shown once; their sessions end. */
  async function resetPassword(u: UserInfo): Promise<void> {
    if (!window.confirm(`Give ${u.email} a new password? Their current one stops working and they are signed out.`)) return;
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
    return h('tr', {}, h('td', {}, e.at.replace('T', ' ').slice(0, 19)), h('td', {}, e.actor.label), h('td', { class: 'action' }, e.action), h('td', {}, e.target));
  }

  return {
    element,
    show() {
      if (!canAdminister(ctx.signed)) {
        say('People and activity are for tenant admins; ask one of them for changes.');
        form.hidden = true;
        return;
      }
      void loadUsers();
      void loadAudit(true);
    },
  };
}
