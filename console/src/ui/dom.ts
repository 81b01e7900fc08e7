/** A tiny element builder: text goes through textContent, never innerHTML, so data cannot inject markup. */
type Attrs = Record<string, string | number | boolean | null | undefined | EventListener>;
type Child = Node | string | number | null | undefined | false;

export function h<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Attrs = {}, ...children: Child[]): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  for (const [name, value] of Object.entries(attrs)) {
    if (value === null || value === undefined || value === false) continue;
    if (typeof value === 'function') el.addEventListener(name.replace(/^on/, ''), value);
    else if (name === 'class') el.className = String(value);
    else if (value === true) el.setAttribute(name, '');
    else el.setAttribute(name, String(value));
  }
  for (const child of children) {
    if (child === null || child === undefined || child === false) continue;
    el.append(typeof child === 'string' || typeof child === 'number' ? String(child) : child);
  }
  return el;
}

/** A plain table: a header row of column names (scope col) and the given body. */
export function plainTable(id: string, columns: readonly string[], body: HTMLTableSectionElement): HTMLTableElement {
  return h('table', { class: 'plain', id }, h('thead', {}, h('tr', {}, ...columns.map((t) => h('th', { scope: 'col' }, t)))), body);
}

/** Sets a status line: plain, good or bad (bad is announced by screen readers as an alert). */
export function setStatus(el: HTMLElement, text: string, tone: 'plain' | 'good' | 'bad' = 'plain'): void {
  el.textContent = text;
  el.className = `status ${tone === 'plain' ? '' : tone}`;
  el.setAttribute('role', tone === 'bad' ? 'alert' : 'status');
}

/** Runs `action` when the form is submitted, instead of the browser's page load. */
export function onSubmit(form: HTMLFormElement, action: () => Promise<void>): void {
  form.addEventListener('submit', (e) => {
    e.preventDefault();
    void action();
  });
}

/** Offers text as a file download (no server round trip). */
export function download(name: string, text: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = h('a', { href: url, download: name });
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

export const fmt = new Intl.NumberFormat('en-GB');
export function bytes(n: number): string {
  if (n < 1024) return `${fmt.format(n)} B`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KiB`;
  if (n < 1024 ** 3) return `${(n / 1024 / 1024).toFixed(1)} MiB`;
  return `${(n / 1024 ** 3).toFixed(2)} GiB`;
}

export function errorText(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}
