import { Hono } from 'hono';
import { tenantRoutes } from './accounts/tenant-routes.ts';
import { userRoutes } from './accounts/user-routes.ts';
import { auditRoutes } from './audit/audit-routes.ts';
import { keyRoutes } from './auth/key-routes.ts';
import { passwordRoutes } from './auth/password-routes.ts';
import { sessionRoutes } from './auth/session-routes.ts';
import { statementRoutes } from './billing/billing-routes.ts';
import { tariffRoutes } from './billing/tariff-routes.ts';
import { adminDatasetRoutes } from './datasets/admin-routes.ts';
import { datasetLifecycleRoutes } from './datasets/dataset-lifecycle-routes.ts';
import { versionTableRoutes } from './datasets/version-table-routes.ts';
import type { AppBindings } from './env.ts';
import { errorBody, handleError } from './http/error-handler.ts';
import { finderPageRoutes, finderSettingsRoutes } from './finder/finder-routes.ts';
import { usageRoutes } from './metering/usage-routes.ts';
import { modulusRoutes } from './moduli/modulus-routes.ts';
import { publicRoutes } from './query/public-routes.ts';
import { referenceRoutes } from './reference/reference-routes.ts';

/** The whole HTTP surface; routes live in their feature folders. */
export const app = new Hono<AppBindings>()
  .get('/healthz', (c) => c.json({ ok: true }))
  // The admin console is served from static assets at /console/ (wrangler.toml [assets]).
  .get('/', (c) => c.redirect('/console/', 302))
  .route('/', referenceRoutes)
  // The finder page a provider switched on (api/finder/); its script and style are static assets at /finder/.
  .route('/', finderPageRoutes)
  .route('/v1', sessionRoutes)
  .route('/v1', passwordRoutes)
  .route('/v1/admin', adminDatasetRoutes)
  .route('/v1/admin', datasetLifecycleRoutes)
  .route('/v1/admin', versionTableRoutes)
  .route('/v1/admin', keyRoutes)
  .route('/v1/admin', finderSettingsRoutes)
  .route('/v1/admin', usageRoutes)
  .route('/v1/admin', userRoutes)
  .route('/v1/admin', auditRoutes)
  .route('/v1/operator', tenantRoutes)
  .route('/v1/admin', statementRoutes)
  .route('/v1/operator', tariffRoutes)
  .route('/v1', modulusRoutes)
  .route('/v1', publicRoutes)
  .notFound((c) => c.json(errorBody('route_unknown', `no route for ${c.req.method} ${new URL(c.req.url).pathname}`), 404))
  .onError(handleError);
