import type { Caution, NearestResult, NearestSite } from '../../sdk/browser.ts';
import { distanceText } from './distance-text.ts';
import { el } from './dom.ts';
import { geoUri } from './geo-uri.ts';

/**
 * The found sites, nearest first, and the cautions that go with them. Everything from the record
 * is set as text. The heading takes focus (tabindex -1) so a screen reader lands on the answer.
 */
export function resultsView(result: NearestResult): { section: HTMLElement; heading: HTMLElement } {
  const count = result.results.length;
  const heading = el('h2', { id: 'results-heading', tabindex: '-1' }, count === 1 ? 'Nearest site' : `Nearest ${count} sites`);
  const list = el('ol', { class: 'sites' }, ...result.results.map((site, i) => siteItem(site, i)));
  const section = el(
    'section',
    { class: 'finder-card results', 'aria-labelledby': 'results-heading' },
    heading,
    el('p', { class: 'hint' }, 'Closest first. Distances are in a straight line from the position you gave, which stayed on this device.'),
    list,
    cautionsView(result.cautions),
  );
  return { section, heading };
}

function siteItem(site: NearestSite, position: number): HTMLElement {
  const title = site.name ?? site.record?.name ?? site.id;
  const fields: Array<[string, string]> = [];
  if (title !== site.id) fields.push(['Reference', site.id]);
  for (const [column, value] of Object.entries(site.record?.details ?? {})) {
    if (value.trim() !== '') fields.push([label(column), value]);
  }
  const headingId = `site-${position + 1}`;
  return el(
    'li',
    { class: 'site', 'aria-labelledby': headingId, 'data-site-id': site.id },
    el('h3', { id: headingId }, title),
    el('p', { class: 'site-distance' }, `${distanceText(site.distanceMeters)} away in a straight line`),
    fields.length > 0 ? el('dl', { class: 'site-fields' }, ...fields.flatMap(([term, value]) => [el('dt', {}, term), el('dd', {}, value)])) : null,
    // The record holds the coordinates exactly as the table does; the candidate list may round them.
    el('a', { class: 'site-map', href: geoUri(site.record?.lat ?? site.lat, site.record?.lon ?? site.lon) }, 'Open in your maps app', el('span', { class: 'visually-hidden' }, `: ${title}`)),
  );
}

/** A column name as a label: "opening_hours" reads "Opening hours". */
function label(column: string): string {
  const words = column.replace(/[_-]+/g, ' ').trim();
  return words === '' ? column : words[0]!.toUpperCase() + words.slice(1);
}

function cautionsView(cautions: readonly Caution[]): HTMLElement {
  return el(
    'div',
    { class: 'cautions' },
    el('h3', {}, 'Before you go'),
    el('ul', {}, ...cautions.map((c) => el('li', { class: c.code === 'far_from_coverage' ? 'caution caution-far' : 'caution', 'data-code': c.code }, c.text))),
    el('p', { class: 'hint' }, 'Local rules and the local emergency number come first.'),
  );
}
