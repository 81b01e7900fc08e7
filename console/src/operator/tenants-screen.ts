import type { NearveilAdmin, TariffPrices, TenantInfo } from '../api/nearveil.ts';
import { currentMonth, formatPrice, parsePrice } from '../cost/tariff.ts';
import { download, errorText, fmt, h, onSubmit, plainTable, setStatus } from '../ui/dom.ts';

/** The tariff's four prices: form label, field, and the unit a price is quoted per. */
/** `example` is shown as a hint in the empty field ("e.g. ..."), never as a value. */
const PRICES: ReadonlyArray<{ field: keyof TariffPrices; label: string; per: string; example: string }> = [
  { field: 'queryMicros', label: 'Per query', per: 'answered query', example: '0.0015' },
  { field: 'gbMicros', label: 'Per GB moved', per: 'GB (10^9 bytes, in plus out)', example: '0.09' },
  { field: 'millionMultiplicationsMicros', label: 'Per million products', per: 'million server products', example: '0.0025' },
  { field: 'monthlyBaseMicros', label: 'Monthly base', per: 'month', example: '49.99' },
];

/**
 * The operator's screen: it belongs to no tenant, so instead of the data screens it lists the
 * tenants, creates them with a first admin, sets each one's tariff and downloads its statements.
 */
export function tenantsScreen(api: NearveilAdmin): HTMLElement {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const body = h('tbody', {});
  const slug = h('input', { id: 'tenant-slug', type: 'text', required: true, maxlength: 63, placeholder: 'e.g. fenwick-clinics' }) as HTMLInputElement;
  const name = h('input', { id: 'tenant-name', type: 'text', required: true, maxlength: 200 }) as HTMLInputElement;
  const adminEmail = h('input', { id: 'tenant-admin', type: 'email', maxlength: 254, placeholder: 'optional' }) as HTMLInputElement;
  const created = h('div', { id: 'tenant-created', 'aria-live': 'polite' });
  const tariffTenant = h('select', { id: 'tariff-tenant' }) as HTMLSelectElement;
  const priceInputs = PRICES.map(
    (p) => h('input', { id: `tariff-${p.field}`, type: 'text', inputmode: 'decimal', required: true, size: 10, placeholder: `e.g. ${p.example}`, 'aria-describedby': 'tariff-hint' }) as HTMLInputElement,
  );
  const tariffHint = h('p', { class: 'hint', id: 'tariff-hint' }, 'Amounts of the billing currency, up to 6 decimals; the grey “e.g.” text in an empty field is only an example.');
  const fromMonth = h('input', { id: 'tariff-from', type: 'month', value: currentMonth() }) as HTMLInputElement;
  const tariffNow = h('p', { id: 'tariff-now', class: 'grid-note' });
  let currency = '';
  // Bumped by every action, so a slower reload started before it never overwrites its message.
  let actions = 0;

  const tenantForm = h(
    'form',
    { class: 'toolbar', 'aria-label': 'Create a tenant' },
    h('label', { for: 'tenant-slug' }, 'Slug ', slug),
    h('label', { for: 'tenant-name' }, 'Name ', name),
    h('label', { for: 'tenant-admin' }, 'First admin email ', adminEmail),
    h('button', { type: 'submit', class: 'primary' }, 'Create tenant'),
  );
  onSubmit(tenantForm, createTenant);
  const tariffForm = h(
    'form',
    { class: 'toolbar', 'aria-label': 'Set a tariff' },
    h('label', { for: 'tariff-tenant' }, 'Tenant ', tariffTenant),
    ...PRICES.map((p, i) => h('label', { for: `tariff-${p.field}`, title: `per ${p.per}` }, `${p.label} `, priceInputs[i]!)),
    h('label', { for: 'tariff-from' }, 'From ', fromMonth),
    h('button', { type: 'submit', class: 'primary' }, 'Set tariff'),
  );
  onSubmit(tariffForm, setTariff);
  tariffTenant.addEventListener('change', () => void showTariff());

  const element = h(
    'section',
    { 'aria-label': 'Tenants and tariffs' },
    status,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Tenants'),
      h('p', { class: 'grid-note' }, 'You run nearveil for these providers. Their admins and editors sign in here to edit their own sites; you belong to no tenant, so their data screens are not yours.'),
      tenantForm,
      created,
      h('div', { class: 'table-scroll' }, plainTable('tenants-table', ['Tenant', 'Name', 'People', 'Datasets', 'Created', 'Statement (one table per CSV)'], body)),
    ),
    h('div', { class: 'panel' }, h('h2', {}, 'Tariff'), tariffForm, tariffHint, tariffNow),
  );

  /** Reloads the lists; `announce` false keeps the status line of the action that just ran. */
  async function load(announce = true): Promise<void> {
    const seen = actions;
    try {
      const tenants = await api.tenants();
      body.replaceChildren(...tenants.map(row));
      const chosen = tariffTenant.value;
      tariffTenant.replaceChildren(...tenants.map((t) => h('option', { value: t.slug }, t.slug)));
      if (chosen) tariffTenant.value = chosen;
      await showTariff();
      if (announce && seen === actions) say(`${tenants.length} tenant${tenants.length === 1 ? '' : 's'}`);
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  function row(t: TenantInfo): HTMLElement {
    const month = currentMonth();
    return h(
      'tr',
      { 'data-tenant': t.slug },
      h('td', {}, t.slug),
      h('td', {}, t.name),
      h('td', { class: 'num' }, fmt.format(t.users)),
      h('td', { class: 'num' }, fmt.format(t.datasets)),
      h('td', {}, t.createdAt.slice(0, 10)),
      h(
        'td',
        {},
        h('button', { type: 'button', onclick: () => void statement(t.slug, month, 'lines') }, `${t.slug} ${month} (CSV)`),
        ' ',
        h('button', { type: 'button', onclick: () => void statement(t.slug, month, 'days') }, `${t.slug} ${month} daily usage (CSV)`),
      ),
    );
  }

  async function showTariff(): Promise<void> {
    const tenant = tariffTenant.value;
    if (!tenant) return;
    try {
      const { currency: code, tariffs } = await api.tariffs(tenant);
      currency = code;
      const now = tariffs.find((t) => t.fromMonth <= currentMonth());
      tariffNow.textContent = now
        ? `${tenant} pays, from ${now.fromMonth}: ${PRICES.map((p) => `${formatPrice(now[p.field], code)} per ${p.per}`).join(', ')} (set by ${now.setBy}).`
        : `${tenant} has no tariff yet: its statements are refused until one is set. Prices in ${code}.`;
    } catch (err) {
      tariffNow.textContent = errorText(err);
    }
  }

  async function createTenant(): Promise<void> {
    actions++;
    try {
      const made = await api.createTenant({ slug: slug.value.trim(), name: name.value.trim(), ...(adminEmail.value.trim() ? { admin: { email: adminEmail.value.trim() } } : {}) });
      created.replaceChildren(
        made.admin?.initialPassword
          ? h('p', {}, `Created ${made.slug}. Its admin ${made.admin.email} signs in with this first password, shown only now: `, h('code', { id: 'tenant-admin-password' }, made.admin.initialPassword))
          : h('p', {}, `Created ${made.slug}.`),
      );
      tenantForm.reset();
      tariffTenant.value = made.slug;
      say(`Created tenant ${made.slug}`, 'good');
      await load(false);
      tariffTenant.value = made.slug;
      await showTariff();
    } catch (err) {
      say(`Tenant not created: ${errorText(err)}`, 'bad');
    }
  }

  async function setTariff(): Promise<void> {
    actions++;
    const prices: Partial<TariffPrices> = {};
    for (const [i, p] of PRICES.entries()) {
      const micros = parsePrice(priceInputs[i]!.value);
      if (micros === null) return say(`${p.label}: expected an amount such as 0.0015 (at most 6 decimals), got "${priceInputs[i]!.value}"`, 'bad');
      prices[p.field] = micros;
    }
    try {
      const { tariff } = await api.setTariff(tariffTenant.value, { ...(prices as TariffPrices), fromMonth: fromMonth.value });
      say(`Tariff of ${tariffTenant.value} set from ${tariff.fromMonth} (${currency})`, 'good');
      await showTariff();
    } catch (err) {
      say(`Tariff not set: ${errorText(err)}`, 'bad');
    }
  }

  async function statement(tenant: string, month: string, table: 'lines' | 'days'): Promise<void> {
    actions++;
    try {
      download(`nearveil-${tenant}-${month}${table === 'days' ? '-daily-usage' : ''}.csv`, await (await api.tenantStatement(tenant, month, table)).text(), 'text/csv');
      say(`Downloaded the ${month} ${table === 'days' ? 'daily usage' : 'statement'} of ${tenant}`, 'good');
    } catch (err) {
      say(`Statement of ${tenant}: ${errorText(err)}`, 'bad');
    }
  }

  void load();
  return element;
}
