import { h } from './dom.ts';

/** The cautions of DESIGN.md, shown on every screen (README "Cautions" says the same). */
export const CAUTIONS = [
  'Straight-line (great-circle) nearest is not nearest by road or travel time.',
  'Site data can be out of date: people should check with the site before they travel.',
  'In an emergency, call the local emergency number.',
  'Privacy covers the location inside a query, not the network address or the timing of a request.',
] as const;

export function cautionsBar(): HTMLElement {
  return h('aside', { class: 'cautions', 'aria-label': 'Cautions' }, h('ul', {}, ...CAUTIONS.map((c) => h('li', {}, '⚠ ' + c))));
}
