import type { NearveilAdmin } from '../api/nearveil.ts';
import { errorText, h, onSubmit, setStatus } from './dom.ts';

/** "Change my password": current, new and the new again; the server checks the current one. */
export function passwordDialog(api: NearveilAdmin): { open(): void; element: HTMLDialogElement } {
  const current = h('input', { id: 'password-current', type: 'password', autocomplete: 'current-password', required: true }) as HTMLInputElement;
  const fresh = h('input', { id: 'password-new', type: 'password', autocomplete: 'new-password', required: true, minlength: 12, maxlength: 256 }) as HTMLInputElement;
  const again = h('input', { id: 'password-again', type: 'password', autocomplete: 'new-password', required: true }) as HTMLInputElement;
  const status = h('div', { class: 'status', role: 'status' });
  const form = h(
    'form',
    { class: 'stacked', 'aria-label': 'Change my password' },
    h('label', { for: 'password-current' }, 'Current password', current),
    h('label', { for: 'password-new' }, 'New password (at least 12 characters)', fresh),
    h('label', { for: 'password-again' }, 'New password again', again),
    status,
    h('div', { class: 'toolbar' }, h('button', { type: 'submit', class: 'primary' }, 'Change password'), h('button', { type: 'button', onclick: () => dialog.close() }, 'Close')),
  );
  const dialog = h('dialog', { 'aria-labelledby': 'password-title' }, h('h2', { id: 'password-title' }, 'Change my password'), form) as HTMLDialogElement;
  onSubmit(form, submit);

  async function submit(): Promise<void> {
    if (fresh.value !== again.value) return setStatus(status, 'The two new passwords differ', 'bad');
    try {
      await api.changePassword(current.value, fresh.value);
      form.reset();
      setStatus(status, 'Password changed. Your other sessions have been signed out.', 'good');
    } catch (err) {
      setStatus(status, errorText(err), 'bad');
    }
  }

  return {
    element: dialog,
    open() {
      form.reset();
      setStatus(status, '');
      dialog.showModal();
      current.focus();
    },
  };
}
