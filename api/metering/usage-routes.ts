import { Hono } from 'hono';
import { requireRole } from '../auth/principal.ts';
import { tenantInScope } from '../auth/tenant-scope.ts';
import { database } from '../db/client.ts';
import { findDatasetWithHistory } from '../datasets/repository.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { pathSlug } from '../http/params.ts';
import { MONTH_PATTERN, utcMonth } from './calendar.ts';
import { usageReport } from './usage-report.ts';

/** Reads a `month` query parameter (`YYYY-MM`, default the current UTC month). */
export function monthParam(value: string | undefined, field = 'month'): string {
  if (value === undefined || value === '') return utcMonth(new Date());
  if (!MONTH_PATTERN.test(value)) throw new ApiError(400, 'invalid_month', `${field}: expected a month as YYYY-MM, got "${value}"`, field);
  return value;
}

/** `GET /v1/admin/usage?dataset=SLUG&month=YYYY-MM`: the tenant's usage, per day and in total. */
export const usageRoutes = new Hono<AppBindings>().use('/usage', requireRole('tenant_editor')).get('/usage', async (c) => {
  const tenant = await tenantInScope(c);
  const month = monthParam(c.req.query('month'));
  const datasetParam = c.req.query('dataset');
  const dataset = datasetParam === undefined ? undefined : pathSlug(datasetParam, 'dataset');
  const db = database(c.env);
  // A misspelt slug gets 404 (not a report of zeros); a deleted dataset's usage stays readable.
  if (dataset !== undefined) await findDatasetWithHistory(db, tenant.id, dataset);
  const report = await usageReport(db, tenant.id, month, dataset);
  return c.json({ tenant: tenant.slug, dataset: dataset ?? null, ...report });
});
