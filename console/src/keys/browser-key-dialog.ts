import type { KeyInfo, NearveilAdmin } from '../api/nearveil.ts';
import { openQuestion } from '../ui/ask-dialog.ts';
import { errorText, h, setStatus } from '../ui/dom.ts';
import { DEFAULT_RATE, MAX_RATE } from './browser-key-form.ts';
import { readOriginLines } from './origin-lines.ts';
import { readWholeNumber } from './whole-number.ts';

/**
 * "Change origins and rate" of a web-page key: a modal dialog styled as the console's questions
 * (ui/ask-dialog.ts), with a text area, since origins are one per line. A refused change keeps
 * the dialog open with the message; resolves true once the server took the change.
 */
export function changeBrowserKey(api: NearveilAdmin, key: KeyInfo): Promise<boolean> {
  return new Promise((resolve) => {
    const origins = h('textarea', { id: 'change-origins', rows: 4, cols: 40, spellcheck: 'false', autocomplete: 'off' }) as HTMLTextAreaElement;
    origins.value = (key.origins ?? []).join('\n');
    const rate = h('input', { id: 'change-rate', type: 'number', min: 1, max: MAX_RATE, step: 1, value: key.requestsPerMinute ?? DEFAULT_RATE }) as HTMLInputElement;
    const status = h('div', { class: 'status', id: 'change-status', role: 'status' });
    const save = h('button', { type: 'submit', class: 'primary' }, 'Save changes') as HTMLButtonElement;
    const cancel = h('button', { type: 'button' }, 'Cancel');
    const form = h(
      'form',
      { class: 'stacked' },
      h('label', { for: 'change-origins' }, 'Origins of the pages, one per line', origins),
      h('p', { class: 'hint' }, 'Pages of other origins are refused from the moment you save.'),
      h('label', { for: 'change-rate' }, 'Requests a minute per visitor', rate),
      status,
      h('div', { class: 'toolbar' }, save, cancel),
    );
    const { finish } = openQuestion(`Change the key “${key.label}”`, form, null, resolve);
    origins.focus();
    form.addEventListener('submit', (e) => {
      e.preventDefault();
      void (async () => {
        const listed = readOriginLines(origins.value, { field: 'Origins', allowEmpty: false });
        if (!listed.ok) return setStatus(status, listed.problem, 'bad');
        const perMinute = readWholeNumber(rate.value, 'Requests a minute per visitor', 1, MAX_RATE, DEFAULT_RATE);
        if (!perMinute.ok) return setStatus(status, perMinute.problem, 'bad');
        save.disabled = true;
        setStatus(status, 'Saving…');
        try {
          await api.changeBrowserKey(key.id, { origins: listed.origins, requestsPerMinute: perMinute.value });
          finish(true);
        } catch (err) {
          setStatus(status, errorText(err), 'bad');
        } finally {
          save.disabled = false;
        }
      })();
    });
    cancel.addEventListener('click', () => finish(false));
  });
}
