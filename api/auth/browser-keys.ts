import { and, eq, isNull, lt, sql } from 'drizzle-orm';
import type { Context, MiddlewareHandler } from 'hono';
import { z } from 'zod';
import { database, type Database } from '../db/client.ts';
import { clientMinutes, credentials, keyOrigins } from '../db/schema.ts';
import type { AppBindings } from '../env.ts';
import { ApiError } from '../http/api-error.ts';
import { errorBody } from '../http/error-handler.ts';
import { recordRejectedQuery } from '../metering/record-rejection.ts';
import { hashSecret } from './secrets.ts';

/**
 * Browser keys: API keys a web page may carry. Their secret is public (anyone can read a page's
 * source), so what protects them is (1) the exact origins their admin lists: a page from any
 * other origin is refused at the CORS preflight and again on the request itself; (2) a per-client
 * rate, requests per minute per client address, kept in D1 (client_minutes) because the Workers
 * rate-limiting binding takes one fixed limit per binding from wrangler.toml, not one per key;
 * (3) their datasets and monthly quota, as every API key. An origin check stops other web pages
 * in visitors' browsers; a script outside a browser can send any Origin header, which is why
 * (2) and (3) exist.
 */

/** Up to 20 exact serialized origins (RFC 6454): scheme, host and port, nothing else. */
export const OriginsSchema = z
  .array(
    z.string().refine(isExactOrigin, {
      message: 'expected an exact origin such as https://finder.example or http://127.0.0.1:5173 (http or https, no path, no trailing slash)',
    }),
  )
  .max(20);
/** The origins a browser key lists: at least one. */
export const OriginListSchema = OriginsSchema.min(1);
/**
 * Listed by the finder page's key (api/finder/finder-routes.ts) in place of an origin: pages of
 * this server's own origin, whatever name it is reached by. Never accepted from a request body.
 */
export const SELF_ORIGIN = 'self';

export const DEFAULT_REQUESTS_PER_MINUTE = 30;
/** Rows of the rate limiter older than this are deleted by the cron sweep. */
const KEEP_MINUTES = 10;

function isExactOrigin(text: string): boolean {
  try {
    const url = new URL(text);
    return (url.protocol === 'https:' || url.protocol === 'http:') && url.origin === text;
  } catch {
    return false;
  }
}

/**
 * The origin of the page that sent the request: its Origin header, or, for a same-origin GET
 * (browsers send no Origin then), this server's own origin when Sec-Fetch-Site says so.
 */
export function requestOrigin(c: Context<AppBindings>): string | null {
  const origin = c.req.header('origin');
  if (origin !== undefined && origin !== 'null') return origin;
  if (c.req.header('sec-fetch-site') === 'same-origin') return new URL(c.req.url).origin;
  return null;
}

export interface BrowserKeyFields {
  id: string;
  tenantId: string;
  origins: string | null;
  requestsPerMinute: number | null;
}

export const parseOrigins = (stored: string | null): string[] => (stored === null ? [] : (JSON.parse(stored) as string[]));

/**
 * The rules of the key's kind, after its secret was accepted. A browser key: the request's origin
 * must be listed (403 `origin_not_allowed`, or `origin_missing` without one), then the client
 * must be under its rate (429 `rate_limited` with Retry-After). Both refusals are counted among
 * the key's refusals. A server key sent by a page of another origin is refused with 403
 * `server_key_in_page`: it has no origin list, and a page would hand its secret to every visitor.
 * Passing browser requests get their CORS headers here, so every later response carries them.
 */
export async function enforceKeyKind(c: Context<AppBindings>, key: BrowserKeyFields): Promise<void> {
  const origin = requestOrigin(c);
  if (key.origins === null) {
    if (origin !== null && origin !== new URL(c.req.url).origin) {
      throw new ApiError(403, 'server_key_in_page', `this is a server API key; a web page (here ${origin}) needs a browser key that lists its origin`, 'authorization');
    }
    return;
  }
  const refuse = async (err: ApiError) => {
    await countRefusal(c, key, err.code);
    throw err;
  };
  if (origin === null) {
    await refuse(new ApiError(403, 'origin_missing', 'a browser key is used from web pages only: the request carried no Origin header', 'origin'));
  }
  const listed = parseOrigins(key.origins);
  if (!listed.includes(origin!) && !(listed.includes(SELF_ORIGIN) && origin === new URL(c.req.url).origin)) {
    await refuse(new ApiError(403, 'origin_not_allowed', `this browser key may be used by pages of its listed origins only, not ${origin}`, 'origin'));
  }
  allowOrigin(c, origin!);
  const perMinute = key.requestsPerMinute ?? DEFAULT_REQUESTS_PER_MINUTE;
  const retryAfter = await takeClientRequest(database(c.env), key.id, clientAddress(c), perMinute, Date.now());
  if (retryAfter !== null) {
    await refuse(
      new ApiError(429, 'rate_limited', `too many requests from this client with this key (at most ${perMinute} a minute); try again in ${retryAfter} s`, 'requestsPerMinute', {
        'Retry-After': String(retryAfter),
      }),
    );
  }
}

/** Headers a listed page needs to read the answer, its timing and its refusals. */
function allowOrigin(c: Context<AppBindings>, origin: string): void {
  c.header('Access-Control-Allow-Origin', origin);
  c.header('Access-Control-Expose-Headers', 'Server-Timing, X-Nearveil-Multiplications, ETag, Retry-After');
  c.header('Vary', 'Origin');
}

/** The client's address as Cloudflare reports it; absent locally, where every client is one. */
function clientAddress(c: Context<AppBindings>): string {
  return c.req.header('cf-connecting-ip') ?? 'local';
}

/**
 * Counts one request of `client` with key `credentialId` in the current UTC minute with one
 * upsert; returns null when under the limit, else the seconds until the next minute.
 */
export async function takeClientRequest(db: Database, credentialId: string, client: string, perMinute: number, nowMs: number): Promise<number | null> {
  const minute = Math.floor(nowMs / 60_000);
  const clientHash = await hashSecret(`${credentialId}\n${minute}\n${client}`);
  const [row] = await db
    .insert(clientMinutes)
    .values({ credentialId, clientHash, minute, requests: 1 })
    .onConflictDoUpdate({ target: [clientMinutes.credentialId, clientMinutes.clientHash, clientMinutes.minute], set: { requests: sql`${clientMinutes.requests} + 1` } })
    .returning({ requests: clientMinutes.requests });
  if (row!.requests <= perMinute) return null;
  return Math.max(1, Math.ceil(((minute + 1) * 60_000 - nowMs) / 1000));
}

/** Deletes rate-limiter rows older than ten minutes (cron). */
export async function forgetOldClientMinutes(db: Database, nowMs = Date.now()): Promise<void> {
  await db.delete(clientMinutes).where(lt(clientMinutes.minute, Math.floor(nowMs / 60_000) - KEEP_MINUTES));
}

async function countRefusal(c: Context<AppBindings>, key: BrowserKeyFields, reason: string): Promise<void> {
  try {
    const slug = /\/datasets\/([^/]+)/.exec(new URL(c.req.url).pathname)?.[1] ?? '';
    await recordRejectedQuery(database(c.env), { tenantId: key.tenantId, credentialId: key.id, datasetSlug: decodeURIComponent(slug), reason });
  } catch (err) {
    console.error('nearveil: could not count a refused browser request', err);
  }
}

/**
 * CORS preflight for the routes API keys use: allowed only for an origin some live browser key
 * lists (the preflight carries no key, so the key's own list is checked on the request itself);
 * any other origin gets 403 and no Access-Control-Allow-Origin, so the browser never sends the
 * request. Requests that are not preflights go on.
 */
export function browserPreflight(): MiddlewareHandler<AppBindings> {
  return async function preflight(c, next) {
    const origin = c.req.header('origin');
    if (c.req.method !== 'OPTIONS' || origin === undefined) return next();
    const [listed] = await database(c.env)
      .select({ id: keyOrigins.credentialId })
      .from(keyOrigins)
      .innerJoin(credentials, eq(credentials.id, keyOrigins.credentialId))
      .where(and(eq(keyOrigins.origin, origin), isNull(credentials.revokedAt)))
      .limit(1);
    if (!listed) {
      return c.json(errorBody('origin_not_allowed', `no browser key lists the origin ${origin}`, 'origin'), 403, { Vary: 'Origin' });
    }
    return c.body(null, 204, {
      'Access-Control-Allow-Origin': origin,
      'Access-Control-Allow-Methods': 'GET, POST, OPTIONS',
      'Access-Control-Allow-Headers': 'authorization, content-type, if-none-match',
      'Access-Control-Max-Age': '600',
      Vary: 'Origin',
    });
  };
}
