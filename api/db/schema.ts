import { sql } from 'drizzle-orm';
import { check, index, integer, primaryKey, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';

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
  /**
   * Browser keys only (api/auth/browser-keys.ts): JSON array of the exact origins whose pages may
   * use the key; null for a server key, which no browser page may use across origins.
   */
  origins: text('origins'),
  /** Browser keys only: requests one client (address) may make per minute with the key. */
  requestsPerMinute: integer('requests_per_minute'),
  /**
   * Browser keys only: the secret itself. A browser key is public by design (it sits in the source
   * of every page that uses it), so the console can show it again and the finder page embeds it.
   */
  publicSecret: text('public_secret'),
});

/** Each browser key's origins, one row each, so a CORS preflight finds its origin by index. */
export const keyOrigins = sqliteTable(
  'key_origins',
  {
    credentialId: text('credential_id').notNull().references(() => credentials.id),
    origin: text('origin').notNull(),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.origin] }), index('key_origins_origin').on(t.origin)],
);

/**
 * Requests per browser key, client and minute, for the per-client rate limit. The client is a
 * SHA-256 of the key id, the minute and the client's address, so rows of different minutes do
 * not link; the sweep deletes rows older than ten minutes.
 */
export const clientMinutes = sqliteTable(
  'client_minutes',
  {
    credentialId: text('credential_id').notNull().references(() => credentials.id),
    clientHash: text('client_hash').notNull(),
    minute: integer('minute').notNull(),
    requests: integer('requests').notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.clientHash, t.minute] }), index('client_minutes_minute').on(t.minute)],
);

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
    /**
     * Set when a tenant admin deleted the dataset: it is hidden and answers nothing, but the row
     * stays so usage rows and statements keep their dataset, and its slug is never reused.
     */
    deletedAt: text('deleted_at'),
    /** Set by the sweep once every blob of a deleted dataset was collected (null: some remain). */
    blobsCollectedAt: text('blobs_collected_at'),
    /** The browser key of the dataset's finder page (api/finder/); null: the page is off. */
    finderKeyId: text('finder_key_id'),
    /** JSON array of origins whose pages may embed the finder page in a frame; null or []: none but its own. */
    finderFrameOrigins: text('finder_frame_origins'),
    /** Sites the finder page shows (null: 3), never more than the active version was built for. */
    finderK: integer('finder_k'),
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
    /** A veiled layout's partition matrix (content-addressed like matrixKey, so versions may share it). */
    partitionKey: text('partition_key'),
    contentHash: text('content_hash'),
    /**
     * 32 random bytes (hex) from which the build derives every record key (core/details/seal.ts).
     * Server-side only: never served, never in a manifest. Drawn once, before the first build,
     * so a rebuild of the same version gives the same bytes.
     */
    detailsSecret: text('details_secret'),
    error: text('error'),
    createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
    builtAt: text('built_at'),
    publishedAt: text('published_at'),
    /** Layout asked for by the build request (auto, grid, adaptive or veiled). */
    layout: text('layout'),
    /** k nearest asked for by the build request: a build resumed after its Worker died asks the same. */
    buildMaxK: integer('build_max_k'),
    /** Build progress while building: the stage, its percent (0-100) and when it was last written. */
    progressStage: text('progress_stage'),
    progressPercent: integer('progress_percent'),
    progressAt: text('progress_at'),
    /** Deliveries of the build message so far (the queue retries a failed attempt). */
    buildAttempts: integer('build_attempts').notNull().default(0),
    /** What the built matrix looks like (JSON: layout kind, rows, columns, ones, plan products). */
    summary: text('summary'),
    /** A version no longer active keeps answering until then (VERSION_GRACE_SECONDS), then retires. */
    servedUntil: text('served_until'),
    retiredAt: text('retired_at'),
    /** Who uploaded it: the user's email or the admin token's label (null for versions from before authors were kept). */
    createdBy: text('created_by'),
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
    /** Server products in 2048-bit units: a 3072-bit product counts PRODUCT_WEIGHT[3072] (core/pir/params.ts). */
    multiplications: integer('multiplications').notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.datasetId, t.version, t.day] })],
);

export const ROLES = ['operator', 'tenant_admin', 'tenant_editor'] as const;
export type Role = (typeof ROLES)[number];

/**
 * People who sign in. The operator runs the service and belongs to no tenant; tenant admins and
 * editors belong to exactly one. password_hash is "scrypt$<log2 N>$<r>$<p>$<salt>$<hash>", or
 * "pbkdf2-sha256$<iterations>$<salt>$<hash>" until its user next signs in (api/auth/password-hash.ts). Emails are stored lower-cased.
 */
export const users = sqliteTable(
  'users',
  {
    id: text('id').primaryKey(),
    tenantId: text('tenant_id').references(() => tenants.id),
    email: text('email').notNull().unique(),
    role: text('role', { enum: ROLES }).notNull(),
    passwordHash: text('password_hash').notNull(),
    createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
    disabledAt: text('disabled_at'),
  },
  (t) => [
    index('users_tenant').on(t.tenantId),
    check('users_role_tenant', sql`(${t.role} = 'operator') = (${t.tenantId} IS NULL)`),
  ],
);

/**
 * Signed-in sessions, keyed by SHA-256 of the 256-bit cookie secret (the secret itself is never
 * stored). Times are milliseconds since the epoch: a session ends at expires_at, or earlier when
 * idle (api/auth/sessions.ts).
 */
export const sessions = sqliteTable(
  'sessions',
  {
    idHash: text('id_hash').primaryKey(),
    userId: text('user_id').notNull().references(() => users.id),
    createdAt: integer('created_at').notNull(),
    lastSeenAt: integer('last_seen_at').notNull(),
    expiresAt: integer('expires_at').notNull(),
  },
  (t) => [index('sessions_user').on(t.userId)],
);

/**
 * Failed sign-ins per key ("email:<sha256>" or "address:<sha256>"), for growing delays. Unknown
 * emails are counted exactly like known ones, so the table reveals nothing about who has an account.
 */
export const loginThrottle = sqliteTable('login_throttle', {
  key: text('key').primaryKey(),
  failures: integer('failures').notNull(),
  lastFailureAt: integer('last_failure_at').notNull(),
  lockedUntil: integer('locked_until').notNull(),
});

/** Who did what to which object, and when; tenant_id is null for operator-wide actions. */
export const auditEvents = sqliteTable(
  'audit_events',
  {
    id: text('id').primaryKey(),
    tenantId: text('tenant_id').references(() => tenants.id),
    actorKind: text('actor_kind', { enum: ['user', 'credential'] }).notNull(),
    actorId: text('actor_id').notNull(),
    actorLabel: text('actor_label').notNull(),
    action: text('action').notNull(),
    target: text('target').notNull(),
    detail: text('detail'),
    createdAt: text('created_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
  },
  (t) => [index('audit_tenant_time').on(t.tenantId, t.createdAt)],
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

/**
 * Tariffs the operator sets per tenant, each from a UTC month on (the newest one not after a
 * month prices it). Money is integer micro-units (1/1,000,000) of BILLING_CURRENCY.
 */
export const tariffs = sqliteTable(
  'tariffs',
  {
    tenantId: text('tenant_id').notNull().references(() => tenants.id),
    fromMonth: text('from_month').notNull(),
    queryMicros: integer('query_micros').notNull(),
    gbMicros: integer('gb_micros').notNull(),
    millionMultiplicationsMicros: integer('million_multiplications_micros').notNull(),
    monthlyBaseMicros: integer('monthly_base_micros').notNull(),
    setAt: text('set_at').notNull().default(sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`),
    setBy: text('set_by').notNull(),
  },
  (t) => [primaryKey({ columns: [t.tenantId, t.fromMonth] })],
);

/**
 * Moduli proven to leave at most one bit per answer row (core/modulus-proof), by SHA-256 of the
 * modulus in its wire bytes. Only the hash is kept, never which key or tenant registered it, so
 * the table links no modulus to an app. A row is removed after expires_at (milliseconds since the
 * epoch, MODULUS_LIFETIME_DAYS after registration); clients rotate their keys well before.
 */
export const provenModuli = sqliteTable('proven_moduli', {
  modulusSha256: text('modulus_sha256').primaryKey(),
  modulusBits: integer('modulus_bits').notNull(),
  registeredAt: integer('registered_at').notNull(),
  expiresAt: integer('expires_at').notNull(),
});

/**
 * Modulus proofs checked per API key and UTC hour ("2026-12-03T10"), for the per-key limits on
 * registrations (api/moduli/registration-limit.ts): every proof checked, and those refused.
 */
export const modulusRegistrations = sqliteTable(
  'modulus_registrations',
  {
    credentialId: text('credential_id').notNull().references(() => credentials.id),
    hour: text('hour').notNull(),
    checked: integer('checked').notNull().default(0),
    refused: integer('refused').notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.credentialId, t.hour] })],
);
