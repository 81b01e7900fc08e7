import { eq } from 'drizzle-orm';
import { Hono, type Context } from 'hono';
import { z } from 'zod';
import { recordAudit } from '../audit/record-audit.ts';
import { requireRole } from '../auth/principal.ts';
import { database } from '../db/client.ts';
import { tenants } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { limitBody } from '../http/body-limit.ts';
import { jsonBody, pathSlug } from '../http/params.ts';
import { MONTH_PATTERN, utcMonth } from '../metering/calendar.ts';
import { billingCurrency } from './billing-routes.ts';
import { setTariff, tariffHistory } from './tariffs.ts';

/** A price in micro-units: whole, not negative, at most one million currency units. */
const Micros = z.number().int().min(0).max(1_000_000_000_000);

const TariffBody = z
  .object({
    queryMicros: Micros,
    gbMicros: Micros,
    millionMultiplicationsMicros: Micros,
    monthlyBaseMicros: Micros,
    /** First UTC month priced by it (default: this month); past months keep the tariff they had. */
    fromMonth: z.string().regex(MONTH_PATTERN, 'expected a month as YYYY-MM').optional(),
  })
  .strict();

async function tenantBySlug(c: Context<AppBindings>) {
  const slug = pathSlug(c.req.param('tenant'), 'tenant');
  const [row] = await database(c.env).select().from(tenants).where(eq(tenants.slug, slug)).limit(1);
  if (!row) throw new ApiError(404, 'tenant_unknown', `tenant "${slug}" does not exist`, 'tenant');
  return row;
}

/** The operator's tariff routes: `PUT` and `GET /v1/operator/tenants/:tenant/tariff`. */
export const tariffRoutes = new Hono<AppBindings>()
  .use('/tenants/:tenant/tariff', requireRole('operator'))
  .put('/tenants/:tenant/tariff', limitBody(4096), async (c) => {
    const tenant = await tenantBySlug(c);
    const body = await jsonBody(c.req.raw, TariffBody);
    const current = utcMonth(new Date());
    const fromMonth = body.fromMonth ?? current;
    if (fromMonth < current) {
      throw new ApiError(400, 'invalid_month', `fromMonth: ${fromMonth} is past; statements already priced stay as they were, so a tariff starts this month (${current}) or later`, 'fromMonth');
    }
    const tariff = await setTariff(database(c.env), tenant.id, { ...body, fromMonth }, operatorLabel(c));
    await recordAudit(c, { action: 'tariff.set', target: `tenant ${tenant.slug} from ${fromMonth}`, detail: { ...body, fromMonth }, tenantId: tenant.id });
    return c.json({ tenant: tenant.slug, currency: billingCurrency(c.env), tariff });
  })
  .get('/tenants/:tenant/tariff', async (c) => {
    const tenant = await tenantBySlug(c);
    return c.json({ tenant: tenant.slug, currency: billingCurrency(c.env), tariffs: await tariffHistory(database(c.env), tenant.id) });
  });

function operatorLabel(c: Context<AppBindings>): string {
  return c.var.principal.label;
}
