import { canAdminister } from '../api/client.ts';
import type { KeyInfo } from '../api/nearveil.ts';
import { currentMonth } from '../cost/tariff.ts';
import { confirmAction } from '../ui/ask-dialog.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { bytes, download, errorText, fmt, h, onSubmit, plainTable, setStatus } from '../ui/dom.ts';
import { changeBrowserKey } from './browser-key-dialog.ts';
import { keyKindFields } from './browser-key-form.ts';
import { finderPanel } from './finder-panel.ts';
import { KEY_COLUMNS, keyRow } from './key-row.ts';
import { refusalsTable } from './refusals-table.ts';
import { drawUsageChart } from './usage-chart.ts';

/**
 * API keys (server keys shown once; web-page keys public, bound to origins and a per-visitor
 * rate), the finder page, and usage: daily chart, totals, refusals by reason, monthly statement.
 * Keys, the finder page and statements are tenant admins' (api/auth/key-routes.ts,
 * api/finder, api/billing): editors see the usage and a plain note of whom to ask, not a form
 * the server would refuse.
 */
export function keysScreen(ctx: ConsoleContext): Screen {
  const admin = canAdminister(ctx.signed);
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const label = h('input', { id: 'key-label', type: 'text', required: true, maxlength: 100, placeholder: 'e.g. clinic finder app' }) as HTMLInputElement;
  const scope = h('select', { id: 'key-datasets', multiple: true, size: 3 }) as HTMLSelectElement;
  const quota = h('input', { id: 'key-quota', type: 'number', min: 1, step: 1, placeholder: 'empty: no limit' }) as HTMLInputElement;
  const secretBox = h('div', { id: 'key-secret', 'aria-live': 'polite' });
  /** The key whose secret is on screen: revoking it takes the secret away too. */
  let shownKeyId: string | null = null;
  const keysBody = h('tbody', {});
  const month = h('input', { id: 'usage-month', type: 'month', value: currentMonth() }) as HTMLInputElement;
  const usageDataset = h('select', { id: 'usage-dataset' }) as HTMLSelectElement;
  const chart = h('canvas', { class: 'chart', id: 'usage-chart', role: 'img', 'aria-label': 'Queries per day' }) as HTMLCanvasElement;
  const totals = h('div', { id: 'usage-totals' });
  const refusals = refusalsTable();
  const kind = keyKindFields();
  const formProblem = h('div', { class: 'status', id: 'key-form-problem', role: 'status' });
  const form = h(
    'form',
    { class: 'key-form', 'aria-label': 'Create an API key' },
    kind.element,
    h(
      'div',
      { class: 'toolbar' },
      h('label', { for: 'key-label' }, 'Label ', label),
      h('label', { for: 'key-datasets' }, 'Datasets (none chosen: all) ', scope),
      h('label', { for: 'key-quota' }, 'Monthly quota ', quota),
      h('button', { type: 'submit', class: 'primary' }, 'Create key'),
    ),
    formProblem,
  );
  // After the finder panel changed its own key: the list again, not the panel (it shows its answer).
  const finder = admin ? finderPanel(ctx, () => void loadKeys(false)) : null;
  onSubmit(form, createKey);
  month.addEventListener('change', () => void loadUsage());
  usageDataset.addEventListener('change', () => void loadUsage());

  const keysPanel = admin
    ? h(
        'div',
        { class: 'panel' },
        h('h2', {}, 'API keys'),
        form,
        secretBox,
        h('div', { class: 'table-scroll' }, plainTable('keys-table', KEY_COLUMNS, keysBody)),
      )
    : h(
        'div',
        { class: 'panel', id: 'keys-for-editors' },
        h('h2', {}, 'API keys'),
        h('p', {}, 'Apps use API keys to query your published datasets. Your tenant\'s admins create and revoke them, and download the monthly statements.'),
        h('p', {}, 'To get a key for an app, ask one of your admins. Here you can follow how much your datasets are used.'),
      );
  const statementButtons = admin
    ? [
        h('button', { type: 'button', onclick: () => void statement('csv', 'lines') }, 'Download statement (CSV)'),
        h('button', { type: 'button', onclick: () => void statement('csv', 'days') }, 'Download daily usage (CSV)'),
        h('button', { type: 'button', onclick: () => void statement('json', 'lines') }, 'Download statement (JSON)'),
      ]
    : [];
  const element = h(
    'section',
    { 'aria-label': admin ? 'Keys and usage' : 'Usage' },
    status,
    keysPanel,
    finder?.element,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Usage'),
      h(
        'div',
        { class: 'toolbar' },
        h('label', { for: 'usage-month' }, 'Month ', month),
        h('label', { for: 'usage-dataset' }, 'Dataset ', usageDataset),
        h('button', { type: 'button', onclick: () => void loadUsage() }, 'Refresh usage'),
        ...statementButtons,
      ),
      admin ? h('p', { class: 'hint' }, 'A statement CSV holds one table: the priced lines, amounts in the currency\'s minor unit (cents for EUR) with exact micro-units beside them. The daily counts they come from are the other CSV; the JSON holds both.') : '',
      chart,
      h('div', { class: 'legend' }, h('span', { style: 'color:#1f5fbf' }, '■ answered'), h('span', { style: 'color:#b3261e' }, '■ rejected')),
      totals,
      refusals.element,
    ),
  );

  async function loadKeys(withFinder = true): Promise<void> {
    try {
      const [keys, datasets] = await Promise.all([admin ? ctx.api.keys() : Promise.resolve([]), ctx.api.datasets()]);
      scope.replaceChildren(...datasets.map((d) => h('option', { value: d.slug }, d.slug)));
      const chosen = usageDataset.value;
      usageDataset.replaceChildren(h('option', { value: '' }, 'all datasets'), ...datasets.map((d) => h('option', { value: d.slug }, d.slug)));
      usageDataset.value = chosen;
      keysBody.replaceChildren(...keys.map((k) => keyRow(k, { showKey: showPublicKey, change: (key) => void changeKey(key), revoke: (key) => void revokeKey(key) })));
      if (withFinder) await finder?.refresh(datasets);
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  async function createKey(): Promise<void> {
    const datasets = Array.from(scope.selectedOptions, (o) => o.value);
    const monthlyQuota = quota.value ? Number(quota.value) : undefined;
    const choice = kind.read();
    if (!choice.ok) {
      setStatus(formProblem, choice.problem, 'bad');
      choice.field.focus();
      return;
    }
    setStatus(formProblem, '');
    const common = { label: label.value, ...(datasets.length ? { datasets } : {}), ...(monthlyQuota ? { monthlyQuota } : {}) };
    try {
      const created = await ctx.api.createKey(
        choice.kind === 'server' ? { kind: 'server', ...common } : { kind: 'browser', ...common, origins: choice.origins, requestsPerMinute: choice.requestsPerMinute },
      );
      const secret = created.secret;
      shownKeyId = created.id;
      const copy = h('button', { type: 'button', onclick: () => void copySecret(secret) }, 'Copy key');
      secretBox.replaceChildren(
        ...(created.kind === 'browser'
          ? [
              h('p', {}, `Web-page key “${created.label}” created. It is public: put it in your pages. You can show it here again at any time.`),
              h('p', { class: 'secret', id: 'new-key-secret' }, secret),
              copy,
              ' ',
              h('button', { type: 'button', onclick: () => hideSecret() }, 'Hide key'),
            ]
          : [
              h('p', {}, `Key “${created.label}” created. Copy it now: it is shown only this once and stored only as a hash.`),
              h('p', { class: 'secret', id: 'new-key-secret' }, secret),
              copy,
              ' ',
              h('button', { type: 'button', onclick: () => hideSecret() }, 'I have stored it'),
            ]),
      );
      label.value = '';
      kind.clear();
      say(`Created key ${created.label}`, 'good');
      await loadKeys();
    } catch (err) {
      say(`Key not created: ${errorText(err)}`, 'bad');
    }
  }

  async function copySecret(secret: string): Promise<void> {
    try {
      await navigator.clipboard.writeText(secret);
      say('Copied', 'good');
    } catch (err) {
      say(`Could not copy (select the key and copy it yourself): ${errorText(err)}`, 'bad');
    }
  }

  /** A web-page key is public: shown on request, for as long as it is not revoked. */
  function showPublicKey(k: KeyInfo): void {
    const secret = k.secret;
    if (!secret) return;
    shownKeyId = k.id;
    secretBox.replaceChildren(
      h('p', {}, `Web-page key “${k.label}”. It is public and works only from the pages it lists.`),
      h('p', { class: 'secret', id: 'browser-key-secret' }, secret),
      h('button', { type: 'button', onclick: () => void copySecret(secret) }, 'Copy key'),
      ' ',
      h('button', { type: 'button', onclick: () => hideSecret() }, 'Hide key'),
    );
  }

  async function changeKey(k: KeyInfo): Promise<void> {
    if (!(await changeBrowserKey(ctx.api, k))) return;
    say(`Changed ${k.label}`, 'good');
    await loadKeys();
  }

  function hideSecret(): void {
    secretBox.replaceChildren();
    shownKeyId = null;
  }

  async function revokeKey(k: KeyInfo): Promise<void> {
    const sure = await confirmAction({
      title: `Revoke the key “${k.label}”?`,
      message: 'Apps using it stop getting answers at once. A revoked key cannot be used again; make a new one if an app still needs access.',
      confirmLabel: 'Revoke key',
      danger: true,
    });
    if (!sure) return;
    try {
      await ctx.api.revokeKey(k.id);
      if (shownKeyId === k.id) hideSecret();
      say(`Revoked ${k.label}`, 'good');
      await loadKeys();
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  async function loadUsage(): Promise<void> {
    try {
      const usage = await ctx.api.usage(usageDataset.value || null, month.value);
      drawUsageChart(chart, usage.month, usage.days);
      const t = usage.totals;
      refusals.show(usage.refusals ?? []);
      totals.replaceChildren(
        h(
          'dl',
          { class: 'facts' },
          h('dt', {}, 'Queries answered'), h('dd', { id: 'usage-queries' }, fmt.format(t.queries)),
          h('dt', {}, 'Rejected'), h('dd', {}, fmt.format(t.rejected)),
          h('dt', {}, 'Bytes in / out'), h('dd', {}, `${bytes(t.bytesIn)} / ${bytes(t.bytesOut)}`),
          h('dt', {}, 'Server products'), h('dd', {}, fmt.format(t.multiplications)),
          ...(admin ? [h('dt', {}, 'Statement, all datasets'), h('dd', { id: 'statement-total' }, await statementTotal(month.value))] : []),
        ),
      );
    } catch (err) {
      drawUsageChart(chart, month.value, []);
      refusals.unknown();
      totals.replaceChildren(h('p', { class: 'grid-note' }, `Usage: ${errorText(err)}`));
    }
  }

  /** The month's statement total at the tenant's tariff, or why there is none. */
  async function statementTotal(forMonth: string): Promise<string> {
    try {
      // The amount due as the statement states it: lines rounded to the currency's minor unit, summed.
      const body = (await (await ctx.api.statement(forMonth, 'json')).json()) as { currency: string; amountDue: string; final: boolean };
      return `${body.currency} ${body.amountDue}${body.final ? '' : ' so far (the month is still running)'}`;
    } catch (err) {
      return errorText(err);
    }
  }

  async function statement(format: 'csv' | 'json', table: 'lines' | 'days'): Promise<void> {
    try {
      const response = await ctx.api.statement(month.value, format, table);
      const name = `nearveil-${table === 'days' ? 'daily-usage' : 'statement'}-${month.value}.${format}`;
      download(name, await response.text(), format === 'csv' ? 'text/csv' : 'application/json');
      say(`Downloaded ${table === 'days' ? 'the daily usage of' : 'the statement of'} ${month.value}`, 'good');
    } catch (err) {
      say(`Statement: ${errorText(err)}`, 'bad');
    }
  }

  return {
    element,
    show() {
      void loadKeys().then(() => loadUsage());
    },
  };
}
