import type { KeyInfo } from '../api/nearveil.ts';
import { currentMonth, formatPrice } from '../cost/tariff.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { bytes, download, errorText, fmt, h, onSubmit, plainTable, setStatus } from '../ui/dom.ts';
import { drawUsageChart } from './usage-chart.ts';

/** API keys (created shown once, revoked) and usage: daily chart, totals, monthly statement. */
export function keysScreen(ctx: ConsoleContext): Screen {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const label = h('input', { id: 'key-label', type: 'text', required: true, maxlength: 100, placeholder: 'e.g. clinic finder app' }) as HTMLInputElement;
  const scope = h('select', { id: 'key-datasets', multiple: true, size: 3 }) as HTMLSelectElement;
  const quota = h('input', { id: 'key-quota', type: 'number', min: 1, step: 1, placeholder: 'no limit' }) as HTMLInputElement;
  const secretBox = h('div', { id: 'key-secret', 'aria-live': 'polite' });
  const keysBody = h('tbody', {});
  const month = h('input', { id: 'usage-month', type: 'month', value: currentMonth() }) as HTMLInputElement;
  const usageDataset = h('select', { id: 'usage-dataset' }) as HTMLSelectElement;
  const chart = h('canvas', { class: 'chart', id: 'usage-chart', role: 'img', 'aria-label': 'Queries per day' }) as HTMLCanvasElement;
  const totals = h('div', { id: 'usage-totals' });
  const form = h(
    'form',
    { class: 'toolbar', 'aria-label': 'Create an API key' },
    h('label', { for: 'key-label' }, 'Label ', label),
    h('label', { for: 'key-datasets' }, 'Datasets (none chosen: all) ', scope),
    h('label', { for: 'key-quota' }, 'Monthly quota ', quota),
    h('button', { type: 'submit', class: 'primary' }, 'Create key'),
  );
  onSubmit(form, createKey);
  month.addEventListener('change', () => void loadUsage());
  usageDataset.addEventListener('change', () => void loadUsage());

  const element = h(
    'section',
    { 'aria-label': 'Keys and usage' },
    status,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'API keys'),
      form,
      secretBox,
      plainTable('keys-table', ['Label', 'Datasets', 'Used this month', 'Monthly quota', 'Created', 'State', ''], keysBody),
    ),
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
        h('button', { type: 'button', onclick: () => void statement('csv') }, 'Download statement (CSV)'),
        h('button', { type: 'button', onclick: () => void statement('json') }, 'Download statement (JSON)'),
      ),
      chart,
      h('div', { class: 'legend' }, h('span', { style: 'color:#1f5fbf' }, '■ answered'), h('span', { style: 'color:#b3261e' }, '■ rejected')),
      totals,
    ),
  );

  async function loadKeys(): Promise<void> {
    try {
      const [keys, datasets] = await Promise.all([ctx.api.keys(), ctx.api.datasets()]);
      scope.replaceChildren(...datasets.map((d) => h('option', { value: d.slug }, d.slug)));
      const chosen = usageDataset.value;
      usageDataset.replaceChildren(h('option', { value: '' }, 'all datasets'), ...datasets.map((d) => h('option', { value: d.slug }, d.slug)));
      usageDataset.value = chosen;
      keysBody.replaceChildren(...keys.map((k) => keyRow(k)));
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  function keyRow(k: KeyInfo): HTMLElement {
    const revoke = h('button', { type: 'button', class: 'danger', onclick: () => void revokeKey(k) }, `Revoke ${k.label}`);
    return h(
      'tr',
      {},
      h('td', {}, k.label),
      h('td', {}, k.datasets && k.datasets.length > 0 ? k.datasets.join(', ') : 'all'),
      h('td', { class: 'num' }, k.usedThisMonth === undefined ? '—' : fmt.format(k.usedThisMonth)),
      h('td', { class: 'num' }, k.monthlyQuota ? fmt.format(k.monthlyQuota) : '—'),
      h('td', {}, k.createdAt.slice(0, 16).replace('T', ' ')),
      h('td', {}, k.revokedAt ? `revoked ${k.revokedAt.slice(0, 10)}` : 'active'),
      h('td', {}, k.revokedAt ? '' : revoke),
    );
  }

  async function createKey(): Promise<void> {
    const datasets = Array.from(scope.selectedOptions, (o) => o.value);
    const monthlyQuota = quota.value ? Number(quota.value) : undefined;
    try {
      const created = await ctx.api.createKey({ label: label.value, ...(datasets.length ? { datasets } : {}), ...(monthlyQuota ? { monthlyQuota } : {}) });
      const secret = created.secret;
      secretBox.replaceChildren(
        h('p', {}, `Key “${created.label}” created. Copy it now: it is shown only this once and stored only as a hash.`),
        h('p', { class: 'secret', id: 'new-key-secret' }, secret),
        h('button', { type: 'button', onclick: () => void navigator.clipboard?.writeText(secret).then(() => say('Copied')) }, 'Copy key'),
        ' ',
        h('button', { type: 'button', onclick: () => secretBox.replaceChildren() }, 'I have stored it'),
      );
      label.value = '';
      say(`Created key ${created.label}`, 'good');
      await loadKeys();
    } catch (err) {
      say(`Key not created: ${errorText(err)}`, 'bad');
    }
  }

  async function revokeKey(k: KeyInfo): Promise<void> {
    if (!window.confirm(`Revoke the key “${k.label}”? Apps using it stop getting answers at once.`)) return;
    try {
      await ctx.api.revokeKey(k.id);
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
      totals.replaceChildren(
        h(
          'dl',
          { class: 'facts' },
          h('dt', {}, 'Queries answered'), h('dd', { id: 'usage-queries' }, fmt.format(t.queries)),
          h('dt', {}, 'Rejected'), h('dd', {}, fmt.format(t.rejected)),
          h('dt', {}, 'Bytes in / out'), h('dd', {}, `${bytes(t.bytesIn)} / ${bytes(t.bytesOut)}`),
          h('dt', {}, 'Server products'), h('dd', {}, fmt.format(t.multiplications)),
          h('dt', {}, 'Statement, all datasets'), h('dd', { id: 'statement-total' }, await statementTotal(month.value)),
        ),
      );
    } catch (err) {
      drawUsageChart(chart, month.value, []);
      totals.replaceChildren(h('p', { class: 'grid-note' }, `Usage: ${errorText(err)}`));
    }
  }

  /** The month's statement total at the tenant's tariff, or why there is none. */
  async function statementTotal(forMonth: string): Promise<string> {
    try {
      const body = (await (await ctx.api.statement(forMonth, 'json')).json()) as { currency: string; totalMicros: number; final: boolean };
      return `${formatPrice(body.totalMicros, body.currency, 2)}${body.final ? '' : ' so far (the month is still running)'}`;
    } catch (err) {
      return errorText(err);
    }
  }

  async function statement(format: 'csv' | 'json'): Promise<void> {
    try {
      const response = await ctx.api.statement(month.value, format);
      download(`nearveil-statement-${month.value}.${format}`, await response.text(), format === 'csv' ? 'text/csv' : 'application/json');
      say(`Downloaded the ${month.value} statement`, 'good');
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
