import type { DatasetInfo, DeletedDataset, NearveilAdmin } from '../api/nearveil.ts';
import { errorText, h, onSubmit, setStatus } from '../ui/dom.ts';

/**
 * "Rename…": a new name for people to read. The slug stays, and the dialog says why (apps use
 * it in their URLs). A refused name keeps the dialog open with the server's message.
 */
export function renameDialog(api: NearveilAdmin, renamed: (dataset: DatasetInfo) => void) {
  const name = h('input', { id: 'rename-name', type: 'text', required: true, maxlength: 200, autocomplete: 'off', 'aria-describedby': 'rename-slug rename-status' }) as HTMLInputElement;
  const slugNote = h('p', { class: 'grid-note', id: 'rename-slug' });
  const status = h('div', { class: 'status', role: 'status', id: 'rename-status' });
  const submit = h('button', { type: 'submit', class: 'primary' }, 'Rename') as HTMLButtonElement;
  const form = h(
    'form',
    { class: 'stacked' },
    h('label', { for: 'rename-name' }, 'Name people see', name),
    slugNote,
    status,
    h('div', { class: 'toolbar' }, submit, h('button', { type: 'button', onclick: () => dialog.close() }, 'Cancel')),
  );
  const dialog = h('dialog', { 'aria-labelledby': 'rename-title' }, h('h2', { id: 'rename-title' }, 'Rename dataset'), form) as HTMLDialogElement;
  let slug = '';
  onSubmit(form, async () => {
    submit.disabled = true;
    try {
      const dataset = await api.renameDataset(slug, name.value);
      dialog.close();
      renamed(dataset);
    } catch (err) {
      setStatus(status, errorText(err), 'bad');
    } finally {
      submit.disabled = false;
    }
  });
  return {
    element: dialog,
    open(dataset: DatasetInfo) {
      slug = dataset.slug;
      name.value = dataset.name;
      slugNote.textContent = `The slug ${dataset.slug} stays as it is: apps use it in their URLs and API keys name it.`;
      setStatus(status, '');
      dialog.showModal();
      name.select();
    },
  };
}

/**
 * "Delete…": says what a delete does, before it is done. A dataset with an active version is
 * deleted only after its slug is typed (the server asks for the same confirmation).
 */
export function deleteDialog(api: NearveilAdmin, deleted: (result: DeletedDataset) => void) {
  const typed = h('input', { id: 'delete-confirm', type: 'text', autocomplete: 'off', spellcheck: 'false', 'aria-describedby': 'delete-status' }) as HTMLInputElement;
  const typedLabel = h('label', { for: 'delete-confirm' }, '', typed);
  const consequences = h('ul', { id: 'delete-consequences' });
  const status = h('div', { class: 'status', role: 'status', id: 'delete-status' });
  const submit = h('button', { type: 'submit', class: 'danger' }, 'Delete') as HTMLButtonElement;
  const cancel = h('button', { type: 'button', onclick: () => dialog.close() }, 'Cancel');
  const form = h('form', { class: 'stacked' }, consequences, typedLabel, status, h('div', { class: 'toolbar' }, submit, cancel));
  const title = h('h2', { id: 'delete-title' });
  const dialog = h('dialog', { 'aria-labelledby': 'delete-title', 'aria-describedby': 'delete-consequences' }, title, form) as HTMLDialogElement;
  let target: DatasetInfo | null = null;
  const needsSlug = () => target !== null && target.activeVersion !== null;
  typed.addEventListener('input', () => {
    submit.disabled = needsSlug() && typed.value.trim() !== target!.slug;
  });
  onSubmit(form, async () => {
    if (!target) return;
    submit.disabled = true;
    try {
      const result = await api.deleteDataset(target.slug, needsSlug() ? typed.value.trim() : undefined);
      dialog.close();
      deleted(result);
    } catch (err) {
      setStatus(status, errorText(err), 'bad');
      submit.disabled = false;
    }
  });
  return {
    element: dialog,
    open(dataset: DatasetInfo) {
      target = dataset;
      title.textContent = `Delete ${dataset.name} (${dataset.slug})?`;
      consequences.replaceChildren(
        ...[
          dataset.activeVersion !== null
            ? `Apps stop getting answers at once: v${dataset.activeVersion} is active now, and every query for ${dataset.slug} will be refused.`
            : 'No version of it is active, so no app gets answers from it now.',
          'It leaves every list here and in the CLI; its versions cannot be built or published again.',
          'Its usage stays in the usage reports and statements.',
          `The slug ${dataset.slug} is never given to another dataset.`,
          'Its stored files (site tables, matrices) are removed by the next clean-up, not at once.',
        ].map((text) => h('li', {}, text)),
      );
      typedLabel.hidden = !needsSlug();
      typedLabel.firstChild!.textContent = `Type ${dataset.slug} to confirm `;
      typed.value = '';
      submit.textContent = `Delete ${dataset.slug}`;
      submit.disabled = needsSlug();
      setStatus(status, '');
      dialog.showModal();
      (needsSlug() ? typed : cancel).focus();
    },
  };
}
