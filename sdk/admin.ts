import type { LayoutChoice } from '../core/build/choose-layout.ts';
import { NearveilError, send, type FetchLike, type SessionCredentials } from './http.ts';

export interface AdminOptions {
  endpoint: string;
  /** The tenant's admin token (starts with nva_); or `session`, a signed-in person (sdk/session.ts). */
  token?: string;
  session?: SessionCredentials;
  fetch?: FetchLike;
}

export interface VersionInfo {
  version: number;
  /** draft, building, ready, active, retired or failed. */
  state: string;
  siteCount: number;
  /** Who uploaded it: a user's email or an admin token's label (null for older versions). */
  author: string | null;
  contentHash: string | null;
  /** While building: the stage and the percent of the whole build reached. */
  progress: { stage: string; percent: number } | null;
  error: string | null;
  /** The layout built (null before a build), named as the build's layout option names it. */
  layout: 'grid' | 'adaptive' | 'veiled' | null;
  /** Why the build chose its layout: its cost per query and what became of the others weighed. */
  layoutReason: string | null;
  /** The layout the last build asked for: 'auto' when the build chose (null before any build). */
  requestedLayout: LayoutChoice | null;
  matrix: { rows: number; columns: number; ones: number; products: number } | null;
  /** k nearest the built matrix serves. */
  maxK: number | null;
  createdAt: string;
  builtAt: string | null;
  publishedAt: string | null;
  /** A version no longer active answers until then, then retires. */
  servedUntil: string | null;
  retiredAt: string | null;
}

export interface DatasetInfo {
  slug: string;
  /** The name people read; a rename changes it, never the slug. */
  name: string;
  activeVersion: number | null;
  createdAt: string;
}

export interface DeletedDataset {
  dataset: string;
  name: string;
  deletedAt: string;
  /** The version that was active when it was deleted, and stopped answering. */
  activeVersion: number | null;
}

export interface Switched {
  dataset: string;
  activeVersion: number;
  previousVersion: number | null;
  graceSeconds: number;
}

export interface BuildWaitOptions {
  /** Called with every progress seen while waiting. */
  onProgress?: (info: VersionInfo) => void;
  /** Give up after this long (default 15 minutes, a queue consumer's wall-clock limit). */
  timeoutMs?: number;
  pollMs?: number;
}

export interface ApiKeyInfo {
  id: string;
  label: string;
  datasets: string[] | null;
  monthlyQuota: number | null;
  usedThisMonth: number;
  createdAt: string;
  revokedAt: string | null;
  /** server: kept secret by an app's server; browser: public, for web pages of `origins` only. */
  kind: 'server' | 'browser';
  origins?: string[];
  /** Browser keys: requests one client address may make per minute. */
  requestsPerMinute?: number;
  /** Browser keys while not revoked: the key itself (public by design). */
  secret?: string;
}

export interface NewApiKey {
  label: string;
  datasets?: string[];
  monthlyQuota?: number;
  /** 'browser' needs `origins`: the exact origins (https://host[:port]) whose pages may use it. */
  kind?: 'server' | 'browser';
  origins?: string[];
  requestsPerMinute?: number;
}

/** A dataset's finder page (GET/PUT /v1/admin/datasets/:dataset/finder). */
export interface FinderSettings {
  dataset: string;
  enabled: boolean;
  /** The page: link to it, or embed it with `embed`. */
  url: string;
  /** Origins whose pages may show it in a frame. */
  frameOrigins: string[];
  k: number;
  requestsPerMinute: number | null;
  keyId: string | null;
  /** An iframe tag that embeds the page and lets it ask for the position. */
  embed: string;
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
  /** The month's refusals by reason (refusal code) and API key, most first. */
  refusals: Array<{ reason: string; keyId: string; keyLabel: string; count: number }>;
}

/** `?a=1&b=2` from the defined entries, or '' when there are none. */
function queryString(params: Record<string, string | undefined>): string {
  const entries = Object.entries(params).filter((e): e is [string, string] => e[1] !== undefined);
  return entries.length === 0 ? '' : '?' + new URLSearchParams(entries).toString();
}

/** Provider-side calls: datasets, site table uploads, builds and publishing. */
export function connectAdmin(options: AdminOptions) {
  if (!options.token && !options.session) throw new TypeError('connectAdmin: expected an admin token or a session');
  const http = { endpoint: options.endpoint, secret: options.token ?? '', ...(options.session ? { session: options.session } : {}), ...(options.fetch ? { fetch: options.fetch } : {}) };
  const json = async <T>(method: string, path: string, body?: unknown): Promise<T> => {
    const response = await send(http, method, path, body === undefined ? undefined : JSON.stringify(body), body === undefined ? undefined : 'application/json');
    return (await response.json()) as T;
  };
  const versionPath = (dataset: string, version: number) => `v1/admin/datasets/${encodeURIComponent(dataset)}/versions/${version}`;

  return {
    /** Creates the dataset unless it exists already; true when this call created it. */
    async ensureDataset(slug: string, name?: string): Promise<boolean> {
      try {
        await json('POST', 'v1/admin/datasets', { slug, ...(name ? { name } : {}) });
        return true;
      } catch (err) {
        if (!(err instanceof NearveilError && err.code === 'dataset_exists')) throw err;
        return false;
      }
    },
    async uploadSiteTable(dataset: string, csv: string | Uint8Array<ArrayBuffer>): Promise<VersionInfo> {
      const response = await send(http, 'POST', `v1/admin/datasets/${encodeURIComponent(dataset)}/versions`, csv, 'text/csv; charset=utf-8');
      return (await response.json()) as VersionInfo;
    },
    /**
     * Queues a build and waits until the version is ready (throws `build_failed` if it failed).
     * layout: 'grid' discloses only a box around the sites; 'adaptive' where they are dense; 'auto'
     * the cheaper of those; 'veiled' only a coarse grid, at the price of a second private round.
     * maxK: build for the k nearest, 1 to 8 (lists grow with it).
     */
    async build(dataset: string, version: number, layout: LayoutChoice = 'auto', maxK = 1, wait: BuildWaitOptions = {}): Promise<VersionInfo & { matrix: NonNullable<VersionInfo['matrix']> }> {
      await json<VersionInfo>('POST', `${versionPath(dataset, version)}/build?layout=${layout}&maxK=${maxK}`);
      const until = Date.now() + (wait.timeoutMs ?? 15 * 60_000);
      for (;;) {
        await new Promise((r) => setTimeout(r, wait.pollMs ?? 500));
        let info: VersionInfo;
        try {
          // Each poll gives up after 10 s: a local runtime restarting after a long build may drop it.
          const response = await send(http, 'GET', versionPath(dataset, version), undefined, undefined, AbortSignal.timeout(10_000));
          info = (await response.json()) as VersionInfo;
        } catch (err) {
          // Restarting (503), briefly unreachable or a dropped poll: poll on until the deadline.
          if (err instanceof NearveilError && (err.status === 503 || err.status === 0) && Date.now() < until) continue;
          throw err;
        }
        if (info.state !== 'building') {
          if (info.state !== 'ready' || info.matrix === null) throw new NearveilError(422, 'build_failed', `build of version ${version} of "${dataset}" ${info.state === 'failed' ? 'failed' : `ended ${info.state}`}: ${info.error ?? 'no reason given'}`, 'version');
          return { ...info, matrix: info.matrix };
        }
        wait.onProgress?.(info);
        if (Date.now() > until) throw new NearveilError(0, 'build_timeout', `version ${version} of "${dataset}" is still building (${info.progress?.stage ?? 'queued'}); check again with \`nearveil versions\``);
      }
    },
    /** The tenant's datasets (deleted ones are left out). */
    datasets: async () => (await json<{ datasets: DatasetInfo[] }>('GET', 'v1/admin/datasets')).datasets,
    /** Changes the name people read; the slug stays (apps use it in their URLs). */
    renameDataset: (dataset: string, name: string) => json<DatasetInfo>('PATCH', `v1/admin/datasets/${encodeURIComponent(dataset)}`, { name }),
    /**
     * Deletes a dataset (tenant admins): it answers no query from then on, its usage stays in
     * reports and its slug is never reused. One with an active version needs `confirm` = its slug.
     */
    deleteDataset: (dataset: string, options: { confirm?: string } = {}) =>
      json<DeletedDataset>('DELETE', `v1/admin/datasets/${encodeURIComponent(dataset)}`, options.confirm === undefined ? {} : { confirm: options.confirm }),
    version: (dataset: string, version: number) => json<VersionInfo>('GET', versionPath(dataset, version)),
    publish: (dataset: string, version: number) => json<Switched>('POST', `${versionPath(dataset, version)}/publish`),
    /** Switches back to `toVersion`, or by default to the newest earlier version that was published. */
    rollback: (dataset: string, toVersion?: number) =>
      json<Switched>('POST', `v1/admin/datasets/${encodeURIComponent(dataset)}/rollback`, toVersion === undefined ? {} : { toVersion }),
    versions: (dataset: string) => json<{ dataset: string; activeVersion: number | null; versions: VersionInfo[] }>('GET', `v1/admin/datasets/${encodeURIComponent(dataset)}/versions`),
    /** A new API key; a server key's `secret` is shown this once. `datasets` limits it to those slugs. */
    createApiKey: (key: NewApiKey) => json<ApiKeyInfo & { secret: string }>('POST', 'v1/admin/keys', key),
    /** A browser key's new origins or per-client rate. */
    updateBrowserKey: (id: string, change: { origins?: string[]; requestsPerMinute?: number }) => json<ApiKeyInfo>('PATCH', `v1/admin/keys/${encodeURIComponent(id)}`, change),
    apiKeys: () => json<{ keys: ApiKeyInfo[] }>('GET', 'v1/admin/keys'),
    finder: (dataset: string) => json<FinderSettings>('GET', `v1/admin/datasets/${encodeURIComponent(dataset)}/finder`),
    /** Switches the dataset's finder page on or off; on makes its browser key, off revokes it. */
    setFinder: (dataset: string, settings: { enabled: boolean; frameOrigins?: string[]; k?: number; requestsPerMinute?: number }) =>
      json<FinderSettings>('PUT', `v1/admin/datasets/${encodeURIComponent(dataset)}/finder`, settings),
    /** Usage of a UTC month (default: the current one), per day and in total. `tenant` is for the operator. */
    usage: (filter: { tenant?: string; dataset?: string; month?: string } = {}) => json<UsageReport>('GET', `v1/admin/usage${queryString(filter)}`),
    revokeApiKey: (id: string) => json<{ id: string; revokedAt: string }>('POST', `v1/admin/keys/${encodeURIComponent(id)}/revoke`),
  };
}
