import './finder.css';
import { connect, NearveilError, type NearestResult, type NearveilClient } from '../../sdk/browser.ts';
import { readConfig, type FinderConfig } from './config.ts';
import type { Point } from './coordinates.ts';
import { el, nextPaint } from './dom.ts';
import { errorText } from './error-text.ts';
import { currentPosition, PositionProblem } from './geolocation.ts';
import { watchedKeyStore } from './key-store.ts';
import { positionForm } from './position-form.ts';
import { resultsView } from './results-view.ts';
import { statusLine } from './status-line.ts';

/**
 * The finder page: the person's position is read on this device (the browser's Geolocation API
 * after a press, or typed) and handed only to the client, which sends an encrypted query to this
 * page's own origin. Nothing else is sent: no analytics, fonts, tiles or outside scripts.
 */
function start(app: HTMLElement, config: FinderConfig): void {
  const status = statusLine();
  const keys = watchedKeyStore({
    async making() {
      status.say('Preparing a private key on this device, once… This takes a few seconds.');
      await nextPaint();
    },
    made: () => status.say('Searching privately…'),
  });
  const client: NearveilClient = connect({ endpoint: location.origin, apiKey: config.apiKey, keyStore: keys.store });
  const resultsSlot = el('div', { id: 'results-slot' });
  let busy = false;
  let k = config.k;

  async function search(point: Point): Promise<void> {
    status.say('Searching privately…');
    const result = await nearestWithin(point);
    const { section, heading } = resultsView(result);
    resultsSlot.replaceChildren(section);
    const count = result.results.length;
    const far = result.farFromCoverage ? ' Your position is far outside the area this list covers.' : '';
    status.say(count === 0 ? 'No sites found.' : `Found ${count} ${count === 1 ? 'site' : 'sites'}. The nearest is ${section.querySelector('.site-distance')?.textContent ?? ''}.${far}`);
    heading.focus();
  }

  /** Asks for k sites, or for as many as the list is built for when that is fewer. */
  async function nearestWithin(point: Point): Promise<NearestResult> {
    try {
      return await client.nearest(config.dataset, point, { k, details: true });
    } catch (err) {
      if (!(err instanceof NearveilError && err.code === 'k_too_large')) throw err;
      k = Math.min(k, (await client.manifest(config.dataset)).maxK);
      return client.nearest(config.dataset, point, { k, details: true });
    }
  }

  /** Runs one piece of work at a time; a press while busy does nothing (the buttons say so). */
  async function exclusively(work: () => Promise<void>): Promise<void> {
    if (busy) return;
    busy = true;
    app.setAttribute('aria-busy', 'true');
    for (const button of app.querySelectorAll('button')) button.setAttribute('aria-disabled', 'true');
    try {
      await work();
    } finally {
      busy = false;
      app.removeAttribute('aria-busy');
      for (const button of app.querySelectorAll('button')) button.removeAttribute('aria-disabled');
    }
  }

  const position = positionForm({
    useDevice: () =>
      void exclusively(async () => {
        status.say('Asking your browser for your position…');
        let point: Point;
        try {
          point = await currentPosition();
        } catch (err) {
          status.problem(err instanceof PositionProblem ? err.message : 'Your position could not be read. Type coordinates below instead.');
          position.focusTyping();
          return;
        }
        await search(point).catch((err: unknown) => status.problem(errorText(err)));
      }),
    useTyped: (point) => void exclusively(() => search(point).catch((err: unknown) => status.problem(errorText(err)))),
  });

  const forget = el('button', { type: 'button', id: 'forget-key' }, "Forget this device's key");
  forget.addEventListener('click', () =>
    void exclusively(async () => {
      try {
        await client.forgetKey();
        status.say("This device's key is deleted. The next search prepares a new one.");
      } catch {
        status.problem("The key could not be deleted. Clearing this site's data in your browser settings also removes it.");
      }
    }),
  );
  const keyCard = el(
    'section',
    { class: 'finder-card key', 'aria-labelledby': 'key-heading' },
    el('h2', { id: 'key-heading' }, "This device's key"),
    el('p', {}, 'To encrypt searches, this page keeps a private key in this browser, so only the first search takes extra time. The key is not linked to your position.'),
    forget,
  );

  app.replaceChildren(position.section, status.element, resultsSlot, keyCard);
  if (!keys.persistent()) status.say('This browser keeps no key between visits, so each visit prepares a new one.');
}

const app = document.getElementById('finder-app');
if (app) {
  try {
    start(app, readConfig());
  } catch (err) {
    app.replaceChildren(el('p', { class: 'finder-card status status-problem', role: 'alert' }, 'This page is not set up correctly, so it cannot search. Please tell the organisation that publishes it.'));
    console.error(err);
  }
}
