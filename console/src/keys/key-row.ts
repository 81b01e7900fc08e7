import { SELF_ORIGIN, type KeyInfo } from '../api/nearveil.ts';
import { fmt, h } from '../ui/dom.ts';

export const KEY_COLUMNS = ['Label', 'Kind', 'Pages allowed', 'Rate a minute', 'Datasets', 'Used this month', 'Monthly quota', 'Created', 'State', ''] as const;

export interface KeyRowActions {
  showKey(k: KeyInfo): void;
  change(k: KeyInfo): void;
  revoke(k: KeyInfo): void;
}

/** "self" is the finder page's own key: pages of this server, changed from the finder page panel. */
export const isFinderKey = (k: KeyInfo) => k.origins?.includes(SELF_ORIGIN) ?? false;

const originText = (origin: string) => (origin === SELF_ORIGIN ? 'this server’s own pages' : origin);

/** One API key as a table row; actions only while it is not revoked. */
export function keyRow(k: KeyInfo, actions: KeyRowActions): HTMLTableRowElement {
  const live = !k.revokedAt;
  const browser = k.kind === 'browser';
  const buttons: HTMLElement[] = [];
  if (live && browser && k.secret) {
    buttons.push(h('button', { type: 'button', 'aria-label': `Show key ${k.label}`, onclick: () => actions.showKey(k) }, 'Show key'));
  }
  if (live && browser && !isFinderKey(k)) {
    buttons.push(h('button', { type: 'button', 'aria-label': `Change… ${k.label}`, onclick: () => actions.change(k) }, 'Change…'));
  }
  if (live) buttons.push(h('button', { type: 'button', class: 'danger', onclick: () => actions.revoke(k) }, `Revoke ${k.label}`));
  return h(
    'tr',
    { 'data-key-id': k.id },
    h('td', {}, k.label),
    h('td', {}, browser ? 'web pages' : 'server'),
    h('td', { class: 'origins' }, ...(browser ? (k.origins ?? []).map((o) => h('div', {}, originText(o))) : ['—'])),
    h('td', { class: 'num' }, browser && k.requestsPerMinute !== undefined ? `${fmt.format(k.requestsPerMinute)} per visitor` : '—'),
    h('td', {}, k.datasets && k.datasets.length > 0 ? k.datasets.join(', ') : 'all'),
    h('td', { class: 'num' }, fmt.format(k.usedThisMonth)),
    h('td', { class: 'num' }, k.monthlyQuota ? fmt.format(k.monthlyQuota) : '—'),
    h('td', { title: k.createdAt }, k.createdAt.slice(0, 10)),
    h('td', {}, k.revokedAt ? `revoked ${k.revokedAt.slice(0, 10)}` : isFinderKey(k) ? 'active (finder page)' : 'active'),
    h('td', { class: 'actions' }, ...buttons),
  );
}
