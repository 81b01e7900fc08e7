import type { RefusalCount } from '../api/nearveil.ts';
import { fmt, h, plainTable } from '../ui/dom.ts';
import { refusalReason } from './refusal-reasons.ts';

/**
 * "Refused requests by reason": the month's refusals per reason and key, most first, as the
 * usage report orders them. Refusals are never billed; this is where to look when an app fails.
 */
export function refusalsTable(): { element: HTMLElement; show(refusals: readonly RefusalCount[]): void; unknown(): void } {
  const body = h('tbody', {});
  const empty = h('p', { class: 'hint', id: 'refusals-empty' }, 'No requests were refused in this month.');
  const table = h('div', { class: 'table-scroll' }, plainTable('refusals-table', ['Reason', 'Key', 'Refused'], body));
  table.querySelector('th:last-child')!.classList.add('num');
  const element = h('div', { class: 'refusals' }, h('h3', { id: 'refusals-title' }, 'Refused requests by reason'), empty, table);
  table.querySelector('table')!.setAttribute('aria-labelledby', 'refusals-title');
  return {
    element,
    show(refusals) {
      body.replaceChildren(
        ...refusals.map((r) =>
          h('tr', { 'data-reason': r.reason }, h('td', { title: r.reason }, refusalReason(r.reason)), h('td', {}, r.keyLabel), h('td', { class: 'num' }, fmt.format(r.count))),
        ),
      );
      empty.hidden = refusals.length > 0;
      table.hidden = refusals.length === 0;
    },
    /** The report could not be read: neither rows nor "none" (the usage panel says why). */
    unknown() {
      body.replaceChildren();
      empty.hidden = true;
      table.hidden = true;
    },
  };
}
