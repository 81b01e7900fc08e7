import { CAUTIONS } from '../../../core/cautions/cautions.ts';
import { h } from './dom.ts';

/** The cautions of DESIGN.md, shown on every screen; the same words the SDK and CLI give with each answer. */
export function cautionsBar(): HTMLElement {
  return h('aside', { class: 'cautions', 'aria-label': 'Cautions' }, h('ul', {}, ...CAUTIONS.map((c) => h('li', {}, '⚠ ' + c.text))));
}
