import { h } from '../ui/dom.ts';
import { readOriginLines } from './origin-lines.ts';
import { readWholeNumber } from './whole-number.ts';

/** A web-page key's rate when none is typed: the server's default too (api/auth/browser-keys.ts). */
export const DEFAULT_RATE = 30;
export const MAX_RATE = 10_000;

export type KeyKindChoice = { ok: true; kind: 'server' } | { ok: true; kind: 'browser'; origins: string[]; requestsPerMinute: number } | { ok: false; problem: string; field: HTMLElement };

/**
 * The part of the new-key form that differs by kind: "For a server" or "For web pages", and
 * for web pages their origins (one per line) and a per-visitor rate. Read in the page first,
 * so a bad line is named before anything is sent.
 */
export function keyKindFields() {
  const server = h('input', { type: 'radio', name: 'key-kind', id: 'key-kind-server', value: 'server', checked: true }) as HTMLInputElement;
  const browser = h('input', { type: 'radio', name: 'key-kind', id: 'key-kind-browser', value: 'browser' }) as HTMLInputElement;
  const origins = h('textarea', {
    id: 'key-origins',
    rows: 3,
    cols: 40,
    spellcheck: 'false',
    autocomplete: 'off',
    placeholder: 'https://clinics.example\nhttp://127.0.0.1:5173',
    'aria-describedby': 'key-origins-hint',
  }) as HTMLTextAreaElement;
  const rate = h('input', { id: 'key-rate', type: 'number', min: 1, max: MAX_RATE, step: 1, value: DEFAULT_RATE }) as HTMLInputElement;
  const pageFields = h(
    'div',
    { class: 'page-key-fields', hidden: true },
    h('label', { for: 'key-origins' }, 'Origins of the pages, one per line', origins),
    h('p', { class: 'hint', id: 'key-origins-hint' }, 'Scheme and host (and port if not the usual one), exactly as the address bar shows them: no path, no slash at the end.'),
    h('label', { for: 'key-rate' }, 'Requests a minute per visitor ', rate),
  );
  const element = h(
    'fieldset',
    { class: 'key-kind' },
    h('legend', {}, 'Where the key is used'),
    h(
      'div',
      { class: 'kind-choices' },
      h('label', { for: 'key-kind-server' }, server, h('span', {}, h('strong', {}, 'For a server'), h('span', { class: 'hint' }, ' · secret; shown once, when it is made'))),
      h('label', { for: 'key-kind-browser' }, browser, h('span', {}, h('strong', {}, 'For web pages'), h('span', { class: 'hint' }, ' · public; works only from the origins you list, at the rate you set'))),
    ),
    pageFields,
  );
  // Not `required`: an empty list gets the form's own message, like any other bad list.
  const sync = () => {
    pageFields.hidden = !browser.checked;
  };
  server.addEventListener('change', sync);
  browser.addEventListener('change', sync);

  return {
    element,
    read(): KeyKindChoice {
      origins.removeAttribute('aria-invalid');
      rate.removeAttribute('aria-invalid');
      if (!browser.checked) return { ok: true, kind: 'server' };
      const listed = readOriginLines(origins.value, { field: 'Origins', allowEmpty: false });
      if (!listed.ok) {
        origins.setAttribute('aria-invalid', 'true');
        return { ok: false, problem: listed.problem, field: origins };
      }
      const perMinute = readWholeNumber(rate.value, 'Requests a minute per visitor', 1, MAX_RATE, DEFAULT_RATE);
      if (!perMinute.ok) {
        rate.setAttribute('aria-invalid', 'true');
        return { ok: false, problem: perMinute.problem, field: rate };
      }
      return { ok: true, kind: 'browser', origins: listed.origins, requestsPerMinute: perMinute.value };
    },
    /** After a key was made: the kind stays, the origins are cleared, the rate goes back to its default. */
    clear(): void {
      origins.value = '';
      rate.value = String(DEFAULT_RATE);
    },
  };
}
