import type { Manifest } from '../../../core/geo/manifest.ts';
import type { FinderSettings as FinderSettingsView } from '../../../sdk/admin.ts';
import type { ApiClient } from './client.ts';

/** The admin routes the console uses, typed. */
export interface DatasetInfo {
  /** Fixed for good: apps use it in their URLs. */
  slug: string;
  /** What people read; a rename changes only this. */
  name: string;
  activeVersion: number | null;
}

export interface DeletedDataset {
  dataset: string;
  name: string;
  deletedAt: string;
  /** The version that was active and stopped answering. */
  activeVersion: number | null;
}

export interface VersionInfo {
  version: number;
  state: string;
  siteCount: number;
  contentHash: string | null;
  error: string | null;
  createdAt: string;
  builtAt: string | null;
  publishedAt: string | null;
  /** Who uploaded it: a user's email or an admin token's label (null for older versions). */
  author: string | null;
  progress: { stage: string; percent: number } | null;
  /** Why the build chose its layout (its cost per query, what became of the others weighed). */
  layoutReason: string | null;
  /** Built versions: the layout built, the k nearest served and the matrix shape. */
  layout: 'grid' | 'adaptive' | 'veiled' | null;
  /** The layout the last build asked for ('auto': the build chose); null before any build. */
  requestedLayout: BuildOptions['layout'] | null;
  maxK: number | null;
  matrix: { rows: number; columns: number; ones: number; products: number } | null;
  /** A replaced version still answers until then. */
  servedUntil: string | null;
}

export interface KeyInfo {
  id: string;
  label: string;
  /** 'server': secret, shown once. 'browser': public, bound to its origins and a per-visitor rate. */
  kind: 'server' | 'browser';
  createdAt: string;
  revokedAt: string | null;
  datasets: string[] | null;
  monthlyQuota: number | null;
  usedThisMonth: number;
  /** Browser keys: exact origins, or "self" (pages of this server) for a finder page's key. */
  origins?: string[];
  /** Browser keys: requests one visitor address may make a minute. */
  requestsPerMinute?: number;
  /** Browser keys while not revoked: the key itself (public). */
  secret?: string;
}

export type NewKey =
  | { kind: 'server'; label: string; datasets?: string[]; monthlyQuota?: number }
  | { kind: 'browser'; label: string; datasets?: string[]; monthlyQuota?: number; origins: string[]; requestsPerMinute: number };

/** The origin a finder page's own key lists: pages of this server, whatever name it is reached by. */
export const SELF_ORIGIN = 'self';

/** The month's refusals of one reason (an error code) and key. */
export interface RefusalCount {
  reason: string;
  keyId: string;
  keyLabel: string;
  count: number;
}

/** What a tenant admin sets for a dataset's public finder page. */
export interface FinderSettings {
  enabled: boolean;
  /** Origins whose pages may show the finder in a frame; empty: it opens only on its own. */
  frameOrigins?: string[];
  /** Sites shown, nearest first (1-8; the page never shows more than the active version was built for). */
  k?: number;
  /** Searches one visitor address may start a minute. */
  requestsPerMinute?: number;
}

/** A dataset's finder page settings, as the admin API answers them (sdk/admin.ts). */
export type FinderView = FinderSettingsView;

export interface UsageDay {
  day: string;
  queries: number;
  rejected: number;
  bytesIn: number;
  bytesOut: number;
  multiplications: number;
}

export interface Usage {
  month: string;
  totals: Omit<UsageDay, 'day'>;
  days: UsageDay[];
  /** Refusals by reason and key, most first. */
  refusals: RefusalCount[];
}

export type Role = 'operator' | 'tenant_admin' | 'tenant_editor';

export interface UserInfo {
  id: string;
  email: string;
  role: Role;
  tenant: string | null;
  createdAt: string;
  disabledAt: string | null;
  /** Only when the server made the password: shown once. */
  initialPassword?: string;
}

export interface AuditLine {
  id: string;
  at: string;
  actor: { kind: 'user' | 'credential'; id: string; label: string };
  action: string;
  target: string;
  detail: Record<string, unknown> | null;
}

export interface TenantInfo {
  slug: string;
  name: string;
  createdAt: string;
  users: number;
  datasets: number;
}

/** A tariff as the operator sets it: integer micro-units of the billing currency. */
export interface TariffPrices {
  queryMicros: number;
  gbMicros: number;
  millionMultiplicationsMicros: number;
  monthlyBaseMicros: number;
}

export interface TariffRow extends TariffPrices {
  fromMonth: string;
  setAt: string;
  setBy: string;
}

/** Build choices: the layout (core/build/choose-layout.ts) and the k nearest to serve (1-8). */
export interface BuildOptions {
  layout: 'auto' | 'adaptive' | 'grid' | 'veiled';
  maxK: number;
}

const ds = (slug: string) => `/v1/admin/datasets/${encodeURIComponent(slug)}`;

export function nearveilAdmin(client: ApiClient) {
  return {
    datasets: async () => (await client.json<{ datasets: DatasetInfo[] }>('GET', '/v1/admin/datasets')).datasets,
    createDataset: (slug: string, name?: string) => client.json<DatasetInfo>('POST', '/v1/admin/datasets', { slug, ...(name ? { name } : {}) }),
    /** Changes the name people read; the slug stays. */
    renameDataset: (slug: string, name: string) => client.json<DatasetInfo>('PATCH', ds(slug), { name }),
    /** Tenant admins; one with an active version needs `confirm` = its slug. */
    deleteDataset: (slug: string, confirm?: string) => client.json<DeletedDataset>('DELETE', ds(slug), confirm === undefined ? {} : { confirm }),
    versions: (slug: string) => client.json<{ dataset: string; activeVersion: number | null; versions: VersionInfo[] }>('GET', `${ds(slug)}/versions`),
    version: (slug: string, version: number) => client.json<VersionInfo>('GET', `${ds(slug)}/versions/${version}`),
    upload: async (slug: string, csv: string) =>
      (await (await client.request('POST', `${ds(slug)}/versions`, { text: csv, contentType: 'text/csv; charset=utf-8' })).json()) as VersionInfo,
    /** Queues a build (202); the version then reports its progress until it is ready or failed. */
    build: (slug: string, version: number, options: BuildOptions = { layout: 'auto', maxK: 1 }) =>
      client.json<VersionInfo>('POST', `${ds(slug)}/versions/${version}/build?layout=${options.layout}&maxK=${options.maxK}`),
    publish: (slug: string, version: number) =>
      client.json<{ activeVersion: number; previousVersion: number | null }>('POST', `${ds(slug)}/versions/${version}/publish`),
    rollback: (slug: string, toVersion: number) =>
      client.json<{ activeVersion: number; previousVersion: number | null; graceSeconds: number }>('POST', `${ds(slug)}/rollback`, { toVersion }),
    table: (slug: string, version: number) => client.text(`${ds(slug)}/versions/${version}/table`),
    manifest: (slug: string, version: number) => client.json<Manifest>('GET', `${ds(slug)}/versions/${version}/manifest`),
    keys: async () => (await client.json<{ keys: KeyInfo[] }>('GET', '/v1/admin/keys')).keys,
    createKey: (body: NewKey) => client.json<KeyInfo & { secret: string }>('POST', '/v1/admin/keys', body),
    /** Browser keys only: new origins, a new per-visitor rate, or both. */
    changeBrowserKey: (id: string, change: { origins?: string[]; requestsPerMinute?: number }) =>
      client.json<KeyInfo>('PATCH', `/v1/admin/keys/${encodeURIComponent(id)}`, change),
    revokeKey: (id: string) => client.json<{ id: string; revokedAt: string }>('POST', `/v1/admin/keys/${encodeURIComponent(id)}/revoke`),
    usage: (slug: string | null, month: string) =>
      client.json<Usage>('GET', `/v1/admin/usage?month=${encodeURIComponent(month)}${slug ? `&dataset=${encodeURIComponent(slug)}` : ''}`),
    finder: (slug: string) => client.json<FinderView>('GET', `${ds(slug)}/finder`),
    setFinder: (slug: string, settings: FinderSettings) => client.json<FinderView>('PUT', `${ds(slug)}/finder`, settings),
    changePassword: async (currentPassword: string, newPassword: string) => {
      await client.request('PUT', '/v1/session/password', { json: { currentPassword, newPassword } });
    },
    users: async () => (await client.json<{ users: UserInfo[] }>('GET', '/v1/admin/users')).users,
    createUser: (body: { email: string; role: Role; password?: string }) => client.json<UserInfo>('POST', '/v1/admin/users', body),
    updateUser: (id: string, change: { role?: Role; disabled?: boolean; password?: string }) => client.json<UserInfo>('PATCH', `/v1/admin/users/${encodeURIComponent(id)}`, change),
    audit: (before: string | null) =>
      client.json<{ events: AuditLine[]; next: string | null }>('GET', `/v1/admin/audit?limit=50${before ? `&before=${encodeURIComponent(before)}` : ''}`),
    tenants: async () => (await client.json<{ tenants: TenantInfo[] }>('GET', '/v1/operator/tenants')).tenants,
    createTenant: (body: { slug: string; name: string; admin?: { email: string } }) =>
      client.json<TenantInfo & { admin: UserInfo | null }>('POST', '/v1/operator/tenants', body),
    tariffs: (tenant: string) => client.json<{ currency: string; tariffs: TariffRow[] }>('GET', `/v1/operator/tenants/${encodeURIComponent(tenant)}/tariff`),
    setTariff: (tenant: string, prices: TariffPrices & { fromMonth?: string }) =>
      client.json<{ currency: string; tariff: TariffRow }>('PUT', `/v1/operator/tenants/${encodeURIComponent(tenant)}/tariff`, prices),
    /** A statement CSV holds one table: the priced lines, or the daily counts they come from. */
    tenantStatement: (tenant: string, month: string, table: 'lines' | 'days' = 'lines') =>
      client.request('GET', `/v1/admin/statements/${encodeURIComponent(month)}?format=csv&table=${table}&tenant=${encodeURIComponent(tenant)}`),
    statement: (month: string, format: 'json' | 'csv', table: 'lines' | 'days' = 'lines') =>
      client.request('GET', `/v1/admin/statements/${encodeURIComponent(month)}${format === 'csv' ? `?format=csv&table=${table}` : ''}`),
  };
}

export type NearveilAdmin = ReturnType<typeof nearveilAdmin>;
