import { MAX_K } from '../../core/geo/manifest.ts';

/** What the finder page needs to know; everything here is public (the API key is a browser key). */
export interface FinderPageConfig {
  /** The dataset's display name, for example "Harrow Vale care sites". */
  title: string;
  /** The dataset's slug, as queries name it. */
  dataset: string;
  /** A browser API key: public by design, limited by origin and rate on the server. */
  apiKey: string;
  /** How many sites to show, nearest first (1 to MAX_K; the page asks for at most the dataset's maxK). */
  k: number;
  /** The page's language tag (BCP 47); "en" when absent. */
  lang?: string;
}

/** The script and stylesheet vite builds from finder/ (finder/vite.config.ts), served as static assets. */
export const FINDER_SCRIPT = '/finder/finder.js';
export const FINDER_STYLESHEET = '/finder/finder.css';

// A loose BCP 47 shape: letters and digits in subtags of 1 to 8, enough to keep markup out.
const LANG_TAG = /^[A-Za-z]{2,8}(-[A-Za-z0-9]{1,8})*$/;

/**
 * The whole finder page: static text, the config as JSON for the script, and links to the built
 * script and stylesheet. No inline script or style, so the page runs under a Content-Security-Policy
 * of default-src 'self' (the JSON block is data: browsers do not execute application/json).
 * The person's position is never part of the page or its URL; the script reads it on the device.
 * Throws TypeError or RangeError naming the field for a config it cannot render safely.
 */
export function renderFinderPage(config: FinderPageConfig): string {
  const checked = checkConfig(config);
  const heading = `Find the nearest ${escapeHtml(checked.title)}`;
  return `<!doctype html>
<html lang="${checked.lang}">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="referrer" content="no-referrer">
<title>${heading}</title>
<link rel="stylesheet" href="${FINDER_STYLESHEET}">
<script type="application/json" id="finder-config">${jsonForScriptElement(checked)}</script>
<script type="module" src="${FINDER_SCRIPT}"></script>
</head>
<body>
<main class="finder">
<header class="finder-head">
<h1>${heading}</h1>
<p class="finder-lede">Look up the nearest sites on this list without telling anyone where you are.</p>
</header>
<section class="finder-card finder-privacy" aria-labelledby="privacy-heading">
<h2 id="privacy-heading">Why this page asks for your position, and what stays here</h2>
<ul>
<li>Your position is used only inside this page, on this device. It is never sent anywhere.</li>
<li>What leaves this device is an encrypted query that the provider of this list cannot read.</li>
<li>The provider learns that a search happened, on which list, when, and from which network address, but never your position.</li>
<li>Your network, and anyone able to watch it, can see that this device connected to this site.</li>
</ul>
</section>
<div id="finder-app"><noscript><p class="finder-card">This page needs JavaScript: the search is worked out on your device, so your position does not have to be sent.</p></noscript></div>
</main>
</body>
</html>
`;
}

function checkConfig(config: FinderPageConfig): Required<FinderPageConfig> {
  const { title, dataset, apiKey, k } = config;
  if (typeof title !== 'string' || title.trim() === '') throw new TypeError(`renderFinderPage: expected a non-empty title, got ${JSON.stringify(title)}`);
  if (typeof dataset !== 'string' || dataset === '') throw new TypeError(`renderFinderPage: expected a dataset slug, got ${JSON.stringify(dataset)}`);
  if (typeof apiKey !== 'string' || apiKey === '') throw new TypeError('renderFinderPage: expected an API key');
  if (!Number.isSafeInteger(k) || k < 1 || k > MAX_K) throw new RangeError(`renderFinderPage: expected k in 1..${MAX_K}, got ${k}`);
  const lang = config.lang ?? 'en';
  if (!LANG_TAG.test(lang)) throw new RangeError(`renderFinderPage: expected a BCP 47 language tag, got ${JSON.stringify(lang)}`);
  return { title, dataset, apiKey, k, lang };
}

/** Text for HTML content and double-quoted attributes. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

/**
 * JSON that cannot end its <script> element or open a comment in it: "<", ">" and "&" as \u
 * escapes (JSON.parse reads them back unchanged), and U+2028/U+2029 too, for older JS parsers.
 */
export function jsonForScriptElement(value: unknown): string {
  return JSON.stringify(value).replace(/[<>&\u2028\u2029]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}
