import type { DatasetInfo, FinderView } from '../api/nearveil.ts';
import { confirmAction } from '../ui/ask-dialog.ts';
import type { ConsoleContext } from '../ui/context.ts';
import { errorText, h, setStatus } from '../ui/dom.ts';
import { DEFAULT_RATE, MAX_RATE } from './browser-key-form.ts';
import { readOriginLines } from './origin-lines.ts';
import { readWholeNumber } from './whole-number.ts';

/** The k a finder page shows when none is set (api/finder/finder-routes.ts); the most a build serves is 8. */
const DEFAULT_K = 3;
const MAX_K = 8;

/**
 * The finder page of one dataset (api/finder/finder-routes.ts): a public page at
 * /find/TENANT/DATASET. Switched on, it gets its own web-page key for this server's pages;
 * switched off (after a question), the page and that key stop at once.
 */
export function finderPanel(ctx: ConsoleContext, onChanged: () => void) {
  const dataset = h('select', { id: 'finder-dataset' }) as HTMLSelectElement;
  const state = h('span', { class: 'state', id: 'finder-state' }, '…');
  const frames = h('textarea', { id: 'finder-frames', rows: 2, cols: 40, spellcheck: 'false', autocomplete: 'off', placeholder: 'https://clinics.example' }) as HTMLTextAreaElement;
  const k = h('input', { id: 'finder-k', type: 'number', min: 1, max: MAX_K, step: 1, value: DEFAULT_K }) as HTMLInputElement;
  const rate = h('input', { id: 'finder-rate', type: 'number', min: 1, max: MAX_RATE, step: 1, value: DEFAULT_RATE }) as HTMLInputElement;
  const problem = h('div', { class: 'status', id: 'finder-problem', role: 'status' });
  const switchOn = h('button', { type: 'submit', class: 'primary' }, 'Switch the page on') as HTMLButtonElement;
  const saveChanges = h('button', { type: 'submit', class: 'primary' }, 'Save page settings') as HTMLButtonElement;
  const switchOff = h('button', { type: 'button', class: 'danger', onclick: () => void turnOff() }, 'Switch the page off') as HTMLButtonElement;
  const published = h('p', { class: 'hint', id: 'finder-unpublished', hidden: true }, 'This dataset has no published version yet: its page says “not available” until one is published.');
  const live = h('div', { class: 'finder-live', id: 'finder-live', hidden: true });
  const form = h(
    'form',
    { class: 'finder-form', 'aria-label': 'Finder page settings' },
    h('label', { for: 'finder-frames' }, 'Sites that may show it in a frame, one origin per line (empty: none)', frames),
    h(
      'div',
      { class: 'toolbar' },
      h('label', { for: 'finder-k' }, 'Sites listed (1–8) ', k),
      h('label', { for: 'finder-rate' }, 'Requests a minute per visitor (a search takes about three) ', rate),
    ),
    problem,
    h('div', { class: 'toolbar' }, switchOn, saveChanges, switchOff),
  );
  form.addEventListener('submit', (e) => {
    e.preventDefault();
    void save();
  });
  dataset.addEventListener('change', () => void load());
  const element = h(
    'div',
    { class: 'panel', id: 'finder-panel' },
    h('h2', {}, 'Finder page'),
    h('p', { class: 'hint' }, 'A public page where anyone can find the nearest sites of one dataset. Link to it, or show it inside your own site.'),
    h('div', { class: 'toolbar' }, h('label', { for: 'finder-dataset' }, 'Dataset for the page ', dataset), h('span', {}, 'Page: ', state)),
    published,
    form,
    live,
    h(
      'p',
      { class: 'hint finder-cautions' },
      'The page gives straight-line distances and tells people to call their local emergency number in an emergency. The position never leaves the visitor’s device; only an encrypted query does, and the network address is still seen.',
    ),
  );
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(problem, text, tone);
  let datasets: DatasetInfo[] = [];

  function show(view: FinderView): void {
    state.textContent = view.enabled ? 'on' : 'off';
    state.className = `state${view.enabled ? ' active' : ''}`;
    frames.value = view.frameOrigins.join('\n');
    k.value = String(view.k);
    rate.value = String(view.requestsPerMinute ?? DEFAULT_RATE);
    switchOn.hidden = view.enabled;
    saveChanges.hidden = !view.enabled;
    switchOff.hidden = !view.enabled;
    published.hidden = datasets.find((d) => d.slug === view.dataset)?.activeVersion != null;
    live.hidden = !view.enabled;
    if (!view.enabled) return live.replaceChildren();
    const embed = h('textarea', { id: 'finder-embed', rows: 3, cols: 40, readonly: true, spellcheck: 'false' }) as HTMLTextAreaElement;
    embed.value = view.embed;
    live.replaceChildren(
      h('p', {}, 'Page address: ', h('a', { id: 'finder-url', href: view.url, target: '_blank', rel: 'noopener' }, view.url)),
      h('label', { for: 'finder-embed' }, 'Code to show it in a frame on your site', embed),
      h('div', { class: 'toolbar' }, h('button', { type: 'button', onclick: () => void copy(view.embed) }, 'Copy embed code')),
    );
  }

  async function copy(text: string): Promise<void> {
    try {
      await navigator.clipboard.writeText(text);
      say('Embed code copied', 'good');
    } catch (err) {
      say(`Could not copy (select the code and copy it yourself): ${errorText(err)}`, 'bad');
    }
  }

  /** Counts loads, so an answer for a dataset chosen before the last one is dropped. */
  let loads = 0;
  async function load(): Promise<void> {
    const slug = dataset.value;
    const mine = ++loads;
    say('');
    if (!slug) {
      form.hidden = true;
      live.hidden = true;
      state.textContent = 'no dataset yet';
      return;
    }
    form.hidden = false;
    element.setAttribute('aria-busy', 'true');
    try {
      const view = await ctx.api.finder(slug);
      if (mine === loads) show(view);
    } catch (err) {
      if (mine === loads) say(errorText(err), 'bad');
    } finally {
      if (mine === loads) element.setAttribute('aria-busy', 'false');
    }
  }

  async function save(): Promise<void> {
    const listed = readOriginLines(frames.value, { field: 'Frame origins', allowEmpty: true });
    if (!listed.ok) return say(listed.problem, 'bad');
    const shown = readWholeNumber(k.value, 'Sites listed', 1, MAX_K, DEFAULT_K);
    if (!shown.ok) return say(shown.problem, 'bad');
    const perMinute = readWholeNumber(rate.value, 'Requests a minute per visitor', 1, MAX_RATE, DEFAULT_RATE);
    if (!perMinute.ok) return say(perMinute.problem, 'bad');
    const slug = dataset.value;
    const wasOn = state.textContent === 'on';
    try {
      show(await ctx.api.setFinder(slug, { enabled: true, frameOrigins: listed.origins, k: shown.value, requestsPerMinute: perMinute.value }));
      say(wasOn ? `Saved the finder page of ${slug}` : `The finder page of ${slug} is on`, 'good');
      onChanged();
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  async function turnOff(): Promise<void> {
    const slug = dataset.value;
    const sure = await confirmAction({
      title: `Switch off the finder page of “${slug}”?`,
      message: 'The page and its key stop working at once: people opening the link, and sites showing it in a frame, see that it is not available. You can switch it on again later; it then gets a new key.',
      confirmLabel: 'Switch the page off',
      danger: true,
    });
    if (!sure) return;
    try {
      show(await ctx.api.setFinder(slug, { enabled: false }));
      say(`The finder page of ${slug} is off`, 'good');
      onChanged();
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  return {
    element,
    /** Lists the datasets again (keeping the one chosen) and reads its page settings. */
    async refresh(list: DatasetInfo[]): Promise<void> {
      datasets = list;
      const chosen = dataset.value || ctx.dataset || '';
      dataset.replaceChildren(...list.map((d) => h('option', { value: d.slug }, d.name === d.slug ? d.slug : `${d.name} (${d.slug})`)));
      dataset.value = list.some((d) => d.slug === chosen) ? chosen : (list[0]?.slug ?? '');
      await load();
    },
  };
}
