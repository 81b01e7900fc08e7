/** The page's settings, as api/finder/finder-html.ts writes them into #finder-config. */
export interface FinderConfig {
  title: string;
  dataset: string;
  apiKey: string;
  k: number;
  lang: string;
}

/** Reads and checks the JSON block; throws TypeError naming the field that is missing or wrong. */
export function readConfig(doc: Document = document): FinderConfig {
  const text = doc.getElementById('finder-config')?.textContent;
  if (!text) throw new TypeError('finder: expected a #finder-config JSON block, found none');
  const value = JSON.parse(text) as Partial<Record<keyof FinderConfig, unknown>>;
  for (const field of ['title', 'dataset', 'apiKey'] as const) {
    if (typeof value[field] !== 'string' || value[field] === '') throw new TypeError(`finder: expected config.${field} to be text, got ${JSON.stringify(value[field])}`);
  }
  if (!Number.isSafeInteger(value.k) || (value.k as number) < 1) throw new TypeError(`finder: expected config.k to be a whole number >= 1, got ${JSON.stringify(value.k)}`);
  return { title: value.title as string, dataset: value.dataset as string, apiKey: value.apiKey as string, k: value.k as number, lang: typeof value.lang === 'string' ? value.lang : 'en' };
}
