import { z } from 'zod';
import { ROLES, VERSION_STATES } from '../db/schema.ts';
import { ERROR_CODES } from '../http/error-codes.ts';

/** Answer shapes, for the API reference only (routes build these objects by hand). */
export const ErrorBody = z
  .object({
    error: z.object({
      code: z.enum(Object.keys(ERROR_CODES) as [string, ...string[]]).describe('stable machine code (see the list of codes)'),
      message: z.string().describe('human message'),
      field: z.string().optional().describe('the input at fault, when one is'),
      details: z.array(z.object({ row: z.number().optional(), column: z.string().optional(), message: z.string() })).optional(),
    }),
  })
  .meta({ id: 'ErrorBody' });

const tenantRef = z.object({ slug: z.string(), name: z.string() });

export const SessionBody = z
  .object({
    user: z.object({ id: z.string(), email: z.string(), role: z.enum(ROLES), tenant: tenantRef.nullable() }),
    csrfToken: z.string().describe('send it as x-nearveil-csrf on signed-in requests that change something'),
  })
  .meta({ id: 'Session' });

export const Dataset = z
  .object({ slug: z.string(), name: z.string(), activeVersion: z.number().int().nullable(), createdAt: z.string() })
  .meta({ id: 'Dataset' });

export const DeletedDataset = z
  .object({
    dataset: z.string(),
    name: z.string(),
    deletedAt: z.string(),
    activeVersion: z.number().int().nullable().describe('the version that was active and stopped answering'),
  })
  .meta({ id: 'DeletedDataset' });

export const Version = z
  .object({
    version: z.number().int(),
    state: z.enum(VERSION_STATES),
    siteCount: z.number().int(),
    author: z.string().nullable().describe("who uploaded it: the user's email or the admin token's label"),
    contentHash: z.string().nullable(),
    progress: z.object({ stage: z.string(), percent: z.number().int() }).nullable().describe('while building: the stage and its percent'),
    error: z.string().nullable().describe('why the last build attempt failed'),
    layout: z.enum(['grid', 'adaptive', 'veiled']).nullable().describe('the layout built (the manifest tags adaptive as "kd")'),
    layoutReason: z.string().nullable().describe('why the build chose its layout: its cost per query and what became of the others weighed'),
    requestedLayout: z.enum(['auto', 'grid', 'adaptive', 'veiled']).nullable().describe('the layout the last build request asked for (auto: the build chose)'),
    maxK: z.number().int().nullable().describe('k nearest the built matrix serves'),
    matrix: z.object({ rows: z.number().int(), columns: z.number().int(), ones: z.number().int(), products: z.number().int() }).nullable(),
    buildAttempts: z.number().int(),
    createdAt: z.string(),
    builtAt: z.string().nullable(),
    publishedAt: z.string().nullable(),
    servedUntil: z.string().nullable().describe('a replaced version still answers until then (grace period)'),
    retiredAt: z.string().nullable(),
  })
  .meta({ id: 'Version' });

const micros = z.number().int().describe('micro-units: 1/1,000,000 of the currency');

export const Tariff = z
  .object({
    fromMonth: z.string().describe('first UTC month (YYYY-MM) it prices'),
    queryMicros: micros,
    gbMicros: micros.describe('per 10^9 bytes moved, in and out'),
    millionMultiplicationsMicros: micros,
    monthlyBaseMicros: micros,
    setAt: z.string(),
    setBy: z.string(),
  })
  .meta({ id: 'Tariff' });

export const Statement = z
  .object({
    tenant: z.string(),
    month: z.string(),
    currency: z.string().describe('ISO 4217'),
    amountsIn: z.string(),
    tariff: Tariff.omit({ setAt: true, setBy: true }),
    usage: z.object({ queries: z.number().int(), rejected: z.number().int(), bytesIn: z.number().int(), bytesOut: z.number().int(), multiplications: z.number().int() }),
    lines: z.array(
      z.object({
        item: z.enum(['monthly_base', 'queries', 'transfer', 'multiplications']),
        quantity: z.number().int(),
        unit: z.enum(['month', 'query', 'byte', 'multiplication']),
        unitPriceMicros: micros,
        pricedPer: z.number().int(),
        amountMicros: micros,
        amount: z.string().describe('amountMicros rounded half up to the minor unit (ISO 4217), as text'),
      }),
    ),
    totalMicros: micros,
    total: z.string().describe('the total in currency units, as text'),
    currencyDecimals: z.number().int().describe('decimals of the minor unit (ISO 4217): 2 for EUR, 0 for JPY'),
    amountDue: z.string().describe('the sum of the lines\' rounded amounts, in the minor unit'),
    days: z.array(z.object({ day: z.string() }).passthrough()),
    final: z.boolean().describe('false while the month is still running'),
  })
  .meta({ id: 'Statement' });

export const ApiKey = z
  .object({
    id: z.string(),
    label: z.string(),
    datasets: z.array(z.string()).nullable(),
    monthlyQuota: z.number().int().nullable(),
    usedThisMonth: z.number().int(),
    createdAt: z.string(),
    revokedAt: z.string().nullable(),
    kind: z.enum(['server', 'browser']).describe('server: kept secret by an app server; browser: public, bound to its origins and a per-client rate'),
    origins: z.array(z.string()).optional().describe('browser keys: the exact origins whose pages may use the key'),
    requestsPerMinute: z.number().int().optional().describe('browser keys: requests per minute one client address may make'),
    secret: z.string().optional().describe('browser keys while not revoked: the key itself (public by design)'),
  })
  .meta({ id: 'ApiKey' });

export const FinderSettings = z
  .object({
    dataset: z.string(),
    enabled: z.boolean(),
    url: z.string().describe('the page: link to it or embed it'),
    frameOrigins: z.array(z.string()).describe('origins whose pages may show it in a frame (CSP frame-ancestors)'),
    k: z.number().int().describe('sites shown, nearest first (at most what the active version was built for)'),
    requestsPerMinute: z.number().int().nullable().describe("requests per minute one visitor address may make with the page's key"),
    keyId: z.string().nullable().describe("the page's browser key (listed with the API keys); null when off"),
    embed: z.string().describe('an iframe tag that embeds the page, allowed to ask for the position'),
  })
  .meta({ id: 'FinderSettings' });

export const User = z
  .object({
    id: z.string(),
    email: z.string(),
    role: z.enum(ROLES),
    tenant: z.string().nullable(),
    createdAt: z.string(),
    disabledAt: z.string().nullable(),
    initialPassword: z.string().optional().describe('only when the password was made by the server: shown once'),
  })
  .meta({ id: 'User' });

export const Tenant = z
  .object({ slug: z.string(), name: z.string(), createdAt: z.string(), users: z.number().int(), datasets: z.number().int() })
  .meta({ id: 'Tenant' });

export const AuditEvent = z
  .object({
    id: z.string(),
    at: z.string(),
    tenant: z.string().nullable(),
    actor: z.object({ kind: z.enum(['user', 'credential']), id: z.string(), label: z.string() }),
    action: z.string().describe('<object>.<verb>, for instance version.publish'),
    target: z.string(),
    detail: z.record(z.string(), z.unknown()).nullable(),
  })
  .meta({ id: 'AuditEvent' });

const usageCounts = { queries: z.number().int(), rejected: z.number().int(), bytesIn: z.number().int(), bytesOut: z.number().int(), multiplications: z.number().int() };

export const UsageReport = z
  .object({
    tenant: z.string(),
    dataset: z.string().nullable(),
    month: z.string(),
    totals: z.object(usageCounts),
    days: z.array(z.object({ day: z.string(), ...usageCounts })),
    refusals: z
      .array(z.object({ reason: z.string(), keyId: z.string(), keyLabel: z.string(), count: z.number().int() }))
      .describe('refused requests of the month by refusal code and API key, most first (never billed)'),
  })
  .meta({ id: 'UsageReport' });

export const ProvenModulus = z
  .object({
    sha256: z.string().describe("SHA-256 of the modulus's wire bytes, the only thing the server keeps of it"),
    bits: z.number().int(),
    registeredAt: z.string(),
    expiresAt: z.string().describe('the registration is forgotten then (MODULUS_LIFETIME_DAYS); rotate keys sooner'),
  })
  .meta({ id: 'ProvenModulus' });
