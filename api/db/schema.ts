import { sql } from 'drizzle-orm';
import { integer, primaryKey, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';

/** A provider that owns datasets. */
export const tenants = sqliteTable('tenants', {
  id: text('id').primaryKey(),
  slug: text('slug').notNull().unique(),
  name: text('name').notNull(),
  createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
});

/**
 * Credentials, stored only as SHA-256 of the secret (secrets carry at least 128 random bits, so
 * a fast hash is enough: common practice for API keys). kind 'admin' manages datasets,
 * kind 'query' (an API key) reads manifests and asks queries.
 */
export const credentials = sqliteTable('credentials', {
  id: text('id').primaryKey(),
  tenantId: text('tenant_id').notNull().references(() => tenants.id),
  kind: text('kind', { enum: ['admin', 'query'] }).notNull(),
  secretHash: text('secret_hash').notNull().unique(),
  label: text('label').notNull(),
  createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
  revokedAt: text('revoked_at'),
  /** API keys only: JSON array of dataset slugs the key may read; null means every dataset of the tenant. */
  datasetScope: text('dataset_scope'),
  /** API keys only: most answered queries per UTC calendar month; null means no limit. */
  monthlyQuota: integer('monthly_quota'),
});

/**
 * Answered queries per API key and UTC month, the counter quotas are checked against. A query
 * takes its slot with one conditional upsert before it is answered, so concurrent queries can
 * never push a key past its quota (see api/metering/quota.ts).
 */
export const keyMonths = sqliteTable(
  'key_months',
  {
    credentialId: text('credential_id').notNull().references(() => credentials.id),
    month: text('month').notNull(),
    queries: integer('queries').notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.month] })],
);

export const datasets = sqliteTable(
  'datasets',
  {
    id: text('id').primaryKey(),
    tenantId: text('tenant_id').notNull().references(() => tenants.id),
    slug: text('slug').notNull(),
    name: text('name').notNull(),
    activeVersion: integer('active_version'),
    createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
  },
  (t) => [uniqueIndex('datasets_tenant_slug').on(t.tenantId, t.slug)],
);

export const VERSION_STATES = ['draft', 'building', 'ready', 'active', 'retired', 'failed'] as const;
export type VersionState = (typeof VERSION_STATES)[number];

/** Immutable site table versions; the blobs they point at are written before the row changes. */
export const versions = sqliteTable(
  'versions',
  {
    datasetId: text('dataset_id').notNull().references(() => datasets.id),
    number: integer('number').notNull(),
    state: text('state', { enum: VERSION_STATES }).notNull(),
    siteCount: integer('site_count').notNull(),
    tableKey: text('table_key').notNull(),
    manifestKey: text('manifest_key'),
    matrixKey: text('matrix_key'),
    contentHash: text('content_hash'),
    error: text('error'),
    createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
    builtAt: text('built_at'),
    publishedAt: text('published_at'),
  },
  (t) => [primaryKey({ columns: [t.datasetId, t.number] })],
);

/** Answered queries per API key, dataset, version and UTC day; incremented with one upsert. */
export const usageDaily = sqliteTable(
  'usage_daily',
  {
    credentialId: text('credential_id').notNull().references(() => credentials.id),
    datasetId: text('dataset_id').notNull().references(() => datasets.id),
    version: integer('version').notNull(),
    day: text('day').notNull(),
    queries: integer('queries').notNull().default(0),
    bytesIn: integer('bytes_in').notNull().default(0),
    bytesOut: integer('bytes_out').notNull().default(0),
    multiplications: integer('multiplications').notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.datasetId, t.version, t.day] })],
);

/**
 * Refused queries per tenant, API key, dataset slug (as asked, the dataset may not exist), UTC day
 * and refusal code. Counted apart from usage_daily and never billed.
 */
export const rejectionsDaily = sqliteTable(
  'rejections_daily',
  {
    tenantId: text('tenant_id').notNull().references(() => tenants.id),
    credentialId: text('credential_id').notNull().references(() => credentials.id),
    datasetSlug: text('dataset_slug').notNull(),
    day: text('day').notNull(),
    reason: text('reason').notNull(),
    queries: integer('queries').notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.datasetSlug, t.day, t.reason] })],
);
