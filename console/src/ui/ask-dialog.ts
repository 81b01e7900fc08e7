import { errorText, h, setStatus } from './dom.ts';

/**
 * The console's one kind of question: a modal <dialog> in the style of the password dialog,
 * instead of the browser's prompt() and confirm() (unstyled, and blocking the page).
 * Escape or Cancel answers no. The dialog is added to the page while open and removed after.
 */
export interface ConfirmOptions {
  title: string;
  message: string;
  /** The button that says yes, in words of the action ("Revoke key"), never just "OK". */
  confirmLabel: string;
  /** Danger styling, and the focus starts on Cancel so Enter alone does not destroy anything. */
  danger?: boolean;
}

export function confirmAction(options: ConfirmOptions): Promise<boolean> {
  return new Promise((resolve) => {
    const yes = h('button', { type: 'submit', class: options.danger ? 'danger' : 'primary' }, options.confirmLabel);
    const no = h('button', { type: 'button' }, 'Cancel');
    const form = h('form', { class: 'stacked', method: 'dialog' }, h('p', { id: 'ask-message' }, options.message), h('div', { class: 'toolbar' }, yes, no));
    const { finish } = openQuestion(options.title, form, 'ask-message', resolve);
    form.addEventListener('submit', (e) => {
      e.preventDefault();
      finish(true);
    });
    no.addEventListener('click', () => finish(false));
    (options.danger ? no : yes).focus();
  });
}

export interface AskTextOptions {
  title: string;
  label: string;
  /** A line under the field saying what is accepted (shown as a hint, never as a value). */
  hint?: string;
  submitLabel: string;
  maxLength?: number;
  /**
   * Does the work with the text typed. A message (or a thrown error) keeps the dialog open and
   * shows it under the field, so a refused name can be corrected in place; null closes it.
   */
  act(value: string): Promise<string | null>;
}

/** Asks for one line of text and acts on it; resolves true once `act` succeeded, false if cancelled. */
export function askText(options: AskTextOptions): Promise<boolean> {
  return new Promise((resolve) => {
    const input = h('input', { id: 'ask-text', type: 'text', required: true, autocomplete: 'off', spellcheck: 'false', maxlength: options.maxLength ?? 200, 'aria-describedby': 'ask-hint ask-status' }) as HTMLInputElement;
    const status = h('div', { class: 'status', id: 'ask-status', role: 'status' });
    const submit = h('button', { type: 'submit', class: 'primary' }, options.submitLabel) as HTMLButtonElement;
    const cancel = h('button', { type: 'button' }, 'Cancel');
    const form = h(
      'form',
      { class: 'stacked' },
      h('label', { for: 'ask-text' }, options.label, input),
      options.hint ? h('p', { class: 'hint', id: 'ask-hint' }, options.hint) : '',
      status,
      h('div', { class: 'toolbar' }, submit, cancel),
    );
    const { finish } = openQuestion(options.title, form, null, resolve);
    form.addEventListener('submit', (e) => {
      e.preventDefault();
      void (async () => {
        submit.disabled = true;
        setStatus(status, 'Working…');
        let problem: string | null;
        try {
          problem = await options.act(input.value.trim());
        } catch (err) {
          problem = errorText(err);
        }
        submit.disabled = false;
        if (problem === null) return finish(true);
        setStatus(status, problem, 'bad');
        input.focus();
      })();
    });
    cancel.addEventListener('click', () => finish(false));
    input.focus();
  });
}

/**
 * Opens a question dialog around `body`; `finish(answer)` closes and removes it and resolves the
 * question once (Escape counts as no). Every dialog of the console is made here.
 */
export function openQuestion(title: string, body: HTMLElement, describedBy: string | null, resolve: (answer: boolean) => void): { dialog: HTMLDialogElement; finish(answer: boolean): void } {
  const dialog = h('dialog', { class: 'ask', 'aria-labelledby': 'ask-title', 'aria-describedby': describedBy }, h('h2', { id: 'ask-title' }, title), body) as HTMLDialogElement;
  document.body.append(dialog);
  dialog.showModal();
  let done = false;
  const finish = (answer: boolean) => {
    if (done) return;
    done = true;
    dialog.close();
    dialog.remove();
    resolve(answer);
  };
  dialog.addEventListener('close', () => finish(false));
  return { dialog, finish };
}
