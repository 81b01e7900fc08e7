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

export const Version = z
  .object({
    version: z.number().int(),
    state: z.enum(VERSION_STATES),
    siteCount: z.number().int(),
    contentHash: z.string().nullable(),
    error: z.string().nullable(),
    createdAt: z.string(),
    builtAt: z.string().nullable(),
    publishedAt: z.string().nullable(),
  })
  .meta({ id: 'Version' });

export const ApiKey = z
  .object({
    id: z.string(),
    label: z.string(),
    datasets: z.array(z.string()).nullable(),
    monthlyQuota: z.number().int().nullable(),
    usedThisMonth: z.number().int(),
    createdAt: z.string(),
    revokedAt: z.string().nullable(),
  })
  .meta({ id: 'ApiKey' });

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
  })
  .meta({ id: 'UsageReport' });
