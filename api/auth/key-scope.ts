import { ApiError } from '../http/api-error.ts';

/** Reads the stored scope of an API key: a JSON array of slugs, or null for every dataset. */
export function parseKeyScope(stored: string | null): readonly string[] | null {
  if (stored === null) return null;
  const parsed: unknown = JSON.parse(stored);
  if (!Array.isArray(parsed) || !parsed.every((s) => typeof s === 'string')) throw new Error('credentials.dataset_scope: expected a JSON array of slugs');
  return parsed;
}

/**
 * Refuses a key scoped to other datasets with 403 `key_scope`. Checked before the dataset is
 * looked up, so a scoped key cannot learn which other datasets exist.
 */
export function assertKeyScope(scope: readonly string[] | null, slug: string): void {
  if (scope !== null && !scope.includes(slug)) {
    throw new ApiError(403, 'key_scope', `this API key may read ${scope.length === 0 ? 'no dataset' : scope.map((s) => `"${s}"`).join(', ')}, not "${slug}"`, 'dataset');
  }
}
