import type { LayoutChoice } from '../core/build/choose-layout.ts';
import { NearveilError, send, type FetchLike } from './http.ts';

export interface AdminOptions {
  endpoint: string;
  /** The tenant's admin token (starts with nva_). */
  token: string;
  fetch?: FetchLike;
}

export interface VersionInfo {
  version: number;
  state: string;
  siteCount: number;
  contentHash: string | null;
  error: string | null;
}

export interface ApiKeyInfo {
  id: string;
  label: string;
  datasets: string[] | null;
  monthlyQuota: number | null;
  usedThisMonth: number;
  createdAt: string;
  revokedAt: string | null;
}

export interface UsageCounts {
  queries: number;
  rejected: number;
  bytesIn: number;
  bytesOut: number;
  multiplications: number;
}

export interface UsageReport {
  tenant: string;
  dataset: string | null;
  month: string;
  totals: UsageCounts;
  days: Array<{ day: string } & UsageCounts>;
}

/** `?a=1&b=2` from the defined entries, or '' when there are none. */
function queryString(params: Record<string, string | undefined>): string {
  const entries = Object.entries(params).filter((e): e is [string, string] => e[1] !== undefined);
  return entries.length === 0 ? '' : '?' + new URLSearchParams(entries).toString();
}

/** Provider-side calls: datasets, site table uploads, builds and publishing. */
export function connectAdmin(options: AdminOptions) {
  const http = { endpoint: options.endpoint, secret: options.token, ...(options.fetch ? { fetch: options.fetch } : {}) };
  const json = async <T>(method: string, path: string, body?: unknown): Promise<T> => {
    const response = await send(http, method, path, body === undefined ? undefined : JSON.stringify(body), body === undefined ? undefined : 'application/json');
    return (await response.json()) as T;
  };
  const versionPath = (dataset: string, version: number) => `v1/admin/datasets/${encodeURIComponent(dataset)}/versions/${version}`;

  return {
    /** Creates the dataset unless it exists already. */
    async ensureDataset(slug: string, name?: string): Promise<void> {
      try {
        await json('POST', 'v1/admin/datasets', { slug, ...(name ? { name } : {}) });
      } catch (err) {
        if (!(err instanceof NearveilError && err.code === 'dataset_exists')) throw err;
      }
    },
    async uploadSiteTable(dataset: string, csv: string | Uint8Array<ArrayBuffer>): Promise<VersionInfo> {
      const response = await send(http, 'POST', `v1/admin/datasets/${encodeURIComponent(dataset)}/versions`, csv, 'text/csv; charset=utf-8');
      return (await response.json()) as VersionInfo;
    },
    /**
     * layout: 'grid' discloses only a box around the sites; 'adaptive' where they are dense; 'auto'
     * the cheaper of those; 'veiled' only a coarse grid, at the price of a second private round.
     */
    build: (dataset: string, version: number, layout: LayoutChoice = 'auto') =>
      json<VersionInfo & { matrix: { rows: number; columns: number; ones: number } }>('POST', `${versionPath(dataset, version)}/build?layout=${layout}`),
    publish: (dataset: string, version: number) =>
      json<{ dataset: string; activeVersion: number; previousVersion: number | null }>('POST', `${versionPath(dataset, version)}/publish`),
    versions: (dataset: string) => json<{ dataset: string; activeVersion: number | null; versions: VersionInfo[] }>('GET', `v1/admin/datasets/${encodeURIComponent(dataset)}/versions`),
    /** A new API key; `secret` is shown this once. `datasets` limits it to those slugs. */
    createApiKey: (key: { label: string; datasets?: string[]; monthlyQuota?: number }) => json<ApiKeyInfo & { secret: string }>('POST', 'v1/admin/keys', key),
    apiKeys: () => json<{ keys: ApiKeyInfo[] }>('GET', 'v1/admin/keys'),
    /** Usage of a UTC month (default: the current one), per day and in total. `tenant` is for the operator. */
    usage: (filter: { tenant?: string; dataset?: string; month?: string } = {}) => json<UsageReport>('GET', `v1/admin/usage${queryString(filter)}`),
    revokeApiKey: (id: string) => json<{ id: string; revokedAt: string }>('POST', `v1/admin/keys/${encodeURIComponent(id)}/revoke`),
  };
}
