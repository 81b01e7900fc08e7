import { connectAdmin } from '../admin.ts';
import { resolveConnection } from './options.ts';

/** Edit distance (Levenshtein: insertions, deletions, substitutions), for "did you mean". */
export function editDistance(a: string, b: string): number {
  let previous = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const current = [i];
    for (let j = 1; j <= b.length; j++) {
      current[j] = Math.min(previous[j]! + 1, current[j - 1]! + 1, previous[j - 1]! + (a[i - 1] === b[j - 1] ? 0 : 1));
    }
    previous = current;
  }
  return previous[b.length]!;
}

/** The closest slug within a third of the asked one's length (at least 2 edits), or null. */
export function closestSlug(asked: string, slugs: readonly string[]): string | null {
  let best: string | null = null;
  let bestDistance = Math.max(2, Math.floor(asked.length / 3)) + 1;
  for (const slug of slugs) {
    const d = editDistance(asked, slug);
    if (d < bestDistance) [best, bestDistance] = [slug, d];
  }
  return best;
}

/**
 * After a "dataset does not exist" refusal: the tenant's datasets, read with the admin token
 * when one is at hand (an API key cannot list them), as lines to print. Quiet when it cannot.
 */
export async function datasetHints(asked: string, values: { endpoint?: string; token?: string }): Promise<string[]> {
  try {
    const conn = resolveConnection({ ...(values.endpoint ? { endpoint: values.endpoint } : {}), ...(values.token ? { token: values.token } : {}) }, () => {});
    if (!conn.token) return [];
    const slugs = (await connectAdmin({ endpoint: conn.endpoint, token: conn.token }).datasets()).map((d) => d.slug);
    if (slugs.length === 0) return ['nearveil: this tenant has no datasets yet; `nearveil import FILE --dataset SLUG` makes one.'];
    const close = closestSlug(asked, slugs);
    const listed = slugs.slice(0, 10).join(', ') + (slugs.length > 10 ? `, and ${slugs.length - 10} more` : '');
    return [`nearveil: ${close ? `did you mean "${close}"? ` : ''}datasets of this tenant: ${listed}`];
  } catch {
    return [];
  }
}
