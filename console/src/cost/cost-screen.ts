import type { ConsoleContext, Screen } from '../ui/context.ts';
import { datasetPicker } from '../ui/dataset-picker.ts';
import { bytes, errorText, fmt, h, setStatus } from '../ui/dom.ts';
import { currentMonth, formatPrice, queryPrice, tariffFromStatement, type Tariff } from './tariff.ts';
import { queryCost } from './query-cost.ts';

/** What one query on a built version costs: shape, bytes, server work, exposure and price. */
export function costScreen(ctx: ConsoleContext): Screen {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const picker = datasetPicker(ctx, 'cost-dataset', () => void load());
  const versionSelect = h('select', { id: 'cost-version' }) as HTMLSelectElement;
  versionSelect.addEventListener('change', () => void render());
  const out = h('div', { id: 'cost-out' });
  const element = h(
    'section',
    { 'aria-label': 'Cost' },
    h('div', { class: 'toolbar' }, picker.element, h('label', { for: 'cost-version' }, 'Version ', versionSelect)),
    status,
    out,
  );

  async function load(): Promise<void> {
    const slug = ctx.dataset;
    if (!slug) return say('No dataset yet');
    try {
      const { versions, activeVersion } = await ctx.api.versions(slug);
      const built = versions.filter((v) => v.state === 'ready' || v.state === 'active');
      versionSelect.replaceChildren(...built.map((v) => h('option', { value: String(v.version) }, `v${v.version}${v.version === activeVersion ? ' (active)' : ''}`)));
      if (built.length === 0) {
        out.replaceChildren();
        return say(`${slug} has no built version yet`);
      }
      versionSelect.value = String(activeVersion ?? built[0]!.version);
      await render();
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  async function render(): Promise<void> {
    const slug = ctx.dataset;
    const version = Number(versionSelect.value);
    if (!slug || !version) return;
    try {
      const manifest = await ctx.api.manifest(slug, version);
      const cost = queryCost(manifest);
      let tariff: Tariff | null = null;
      let tariffNote = '';
      try {
        tariff = tariffFromStatement(await (await ctx.api.statement(currentMonth(), 'json')).json());
        if (!tariff) tariffNote = 'The statement names no tariff for this tenant.';
      } catch (err) {
        tariffNote = `No price shown: ${errorText(err)}`;
      }
      const rows: Array<[string, string]> = [
        ['Matrix shape', `${fmt.format(cost.rows)} rows × ${fmt.format(cost.columns)} columns (${fmt.format(cost.ones)} ones)`],
        ...cost.bytes.map((b): [string, string] => [`Bytes per query, ${b.modulusBits}-bit key`, `${bytes(b.up)} up, ${bytes(b.down)} down (${bytes(b.up + b.down)} in all)`]),
        ['Server work per query', `${fmt.format(cost.products)} modular products (answer plan: ${cost.plan}; plain would be ${fmt.format(cost.plainProducts)})`],
        ['Rows the app decodes', fmt.format(cost.decodedRows)],
        ['Queries that would read the whole matrix', `${fmt.format(cost.queriesForWholeMatrix)} (one per column: the server answers only keys proven to leave one bit per answer row, so a query reveals at most one column's worth, however an app builds its key)`],
      ];
      if (tariff) {
        // Priced as the monthly statement bills it: the smallest key's bytes, the metered products.
        const moved = cost.bytes[0]!.up + cost.bytes[0]!.down;
        const price = queryPrice(tariff, moved, cost.billedProducts);
        const part = (m: number) => formatPrice(m, tariff!.currency);
        rows.push([
          'Price per query at your tariff',
          `${part(price.total)} (query ${part(price.query)} + transfer ${part(price.transfer)} + server work ${part(price.work)}; ${cost.bytes[0]!.modulusBits}-bit key)`,
        ]);
        // Amounts (not prices) in the currency's minor unit: 2 decimals for EUR, 0 for JPY (the browser's currency data).
        const decimals = new Intl.NumberFormat('en', { style: 'currency', currency: tariff.currency }).resolvedOptions().maximumFractionDigits ?? 2;
        rows.push(['Price of reading the whole matrix', `${formatPrice(price.total * cost.queriesForWholeMatrix, tariff.currency, decimals)} (${fmt.format(cost.queriesForWholeMatrix)} queries)`]);
        rows.push(['Monthly base', formatPrice(tariff.monthlyBaseMicros, tariff.currency, decimals)]);
      }
      out.replaceChildren(
        h(
          'div',
          { class: 'panel' },
          h('h2', {}, `One query on ${slug} v${version}`),
          h('table', { class: 'plain', id: 'cost-table' }, h('tbody', {}, ...rows.map(([k, v]) => h('tr', {}, h('th', { scope: 'row' }, k), h('td', {}, v))))),
          tariffNote ? h('p', { class: 'grid-note' }, tariffNote) : '',
        ),
        h(
          'div',
          { class: 'panel' },
          h('h2', {}, 'What this means'),
          h('p', {}, `An app sends one number per column and gets one number per row back, whatever point it asks about, so the server cannot tell which region it wants. Someone holding an API key could still collect your whole table with ${fmt.format(cost.queriesForWholeMatrix)} queries; quotas on keys and the price per query are what stop that.`),
        ),
      );
      say(`Cost of v${version} from its manifest`);
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  return {
    element,
    show() {
      void picker.refresh().then(() => load()).catch((err) => say(errorText(err), 'bad'));
    },
  };
}
