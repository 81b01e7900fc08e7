import { Hono } from 'hono';
import type { AppBindings } from '../env.ts';
import { ERROR_CODES } from '../http/error-codes.ts';
import { openApiDocument } from './openapi-document.ts';
import { renderReferencePage } from './reference-page.ts';

let page: string | undefined;

/** `GET /openapi.json` and `GET /reference`: public, cacheable, the same for everyone. */
export const referenceRoutes = new Hono<AppBindings>()
  .get('/openapi.json', (c) => {
    c.header('Cache-Control', 'public, max-age=300');
    return c.json({ ...openApiDocument(), 'x-error-codes': ERROR_CODES });
  })
  .get('/reference', (c) => {
    page ??= renderReferencePage(openApiDocument() as unknown as Record<string, unknown>);
    c.header('Cache-Control', 'public, max-age=300');
    // Nothing on the page loads from elsewhere: no scripts at all, inline styles only.
    c.header('Content-Security-Policy', "default-src 'none'; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'");
    return c.html(page);
  });
