import { Hono } from 'hono';
import { z } from 'zod';
import { requireRole } from '../auth/principal.ts';
import { tenantInScope } from '../auth/tenant-scope.ts';
import { database } from '../db/client.ts';
import type { AppBindings, Env } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { MONTH_PATTERN, utcMonth } from '../metering/calendar.ts';
import { usageReport } from '../metering/usage-report.ts';
import { buildStatement } from './statement.ts';
import { STATEMENT_TABLES, statementCsv, statementDaysCsv, type StatementTable } from './statement-csv.ts';
import { minorUnitDecimals } from './statement-minor-units.ts';
import { tariffFor } from './tariffs.ts';

/** ISO 4217 code of the one currency all amounts are in (BILLING_CURRENCY, default EUR). */
export function billingCurrency(env: Env): string {
  const code = env.BILLING_CURRENCY ?? 'EUR';
  if (!/^[A-Z]{3}$/.test(code)) throw new Error(`BILLING_CURRENCY: expected an ISO 4217 code such as EUR, got "${code}"`);
  minorUnitDecimals(code); // refuses codes with no minor unit (XAU, XXX): statements give payable amounts
  return code;
}

const MonthPath = z.string().regex(MONTH_PATTERN, 'expected a month as YYYY-MM');

/**
 * `GET /v1/admin/statements/:month` (JSON, or CSV with ?format=csv): the tenant's monthly
 * statement. A CSV file holds one table: the priced lines, or with &table=days the daily counts.
 */
export const statementRoutes = new Hono<AppBindings>().use('/statements/*', requireRole('tenant_admin')).get('/statements/:month', async (c) => {
  const month = c.req.param('month');
  const parsed = MonthPath.safeParse(month);
  if (!parsed.success) throw new ApiError(400, 'invalid_month', `month: expected a month as YYYY-MM, got "${month}"`, 'month');
  const format = c.req.query('format') ?? 'json';
  if (format !== 'json' && format !== 'csv') throw new ApiError(400, 'invalid_format', `format: expected json or csv, got "${format}"`, 'format');
  const table = c.req.query('table');
  if (table !== undefined && format !== 'csv') throw new ApiError(400, 'invalid_format', 'table: only a CSV statement comes as separate tables (add format=csv); the JSON holds both', 'table');
  if (table !== undefined && !STATEMENT_TABLES.includes(table as StatementTable)) {
    throw new ApiError(400, 'invalid_format', `table: expected ${STATEMENT_TABLES.join(' or ')}, got "${table}"`, 'table');
  }
  if (month > utcMonth(new Date())) throw new ApiError(400, 'invalid_month', `month: ${month} has not begun yet`, 'month');
  const tenant = await tenantInScope(c);
  const db = database(c.env);
  const tariff = await tariffFor(db, tenant.id, month);
  if (tariff === null) {
    throw new ApiError(409, 'tariff_missing', `tenant "${tenant.slug}" has no tariff for ${month}; the operator sets one (PUT /v1/operator/tenants/${tenant.slug}/tariff)`, 'month');
  }
  const statement = buildStatement(tenant.slug, billingCurrency(c.env), tariff, await usageReport(db, tenant.id, month));
  if (format === 'json') return c.json({ ...statement, final: month < utcMonth(new Date()) });
  const days = table === 'days';
  return c.body(days ? statementDaysCsv(statement) : statementCsv(statement), 200, {
    'Content-Type': 'text/csv; charset=utf-8; header=present',
    'Content-Disposition': `attachment; filename="nearveil-${tenant.slug}-${month}${days ? '-days' : ''}.csv"`,
  });
});
