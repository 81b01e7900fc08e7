import { app } from './app.ts';
import { forgetOldClientMinutes } from './auth/browser-keys.ts';
import { consumeBuilds } from './builds/consume-builds.ts';
import { sweepVersions } from './datasets/retire-versions.ts';
import { database } from './db/client.ts';
import type { Env } from './env.ts';
import { forgetExpiredModuli } from './moduli/proven-moduli.ts';

export { AnswerPart } from './query/answer-part.ts';

export default {
  fetch: (request, env, ctx) => app.fetch(request, env, ctx),
  /** The build queue's consumer (wrangler.toml [[queues.consumers]]). */
  queue: (batch, env) => consumeBuilds(batch, env),
  /**
   * The cron trigger: retire versions past their grace, collect their blobs, fail dead builds;
   * forget expired modulus registrations and the browser keys' rate counts of past minutes.
   */
  scheduled: (_controller, env, ctx) => ctx.waitUntil(Promise.all([sweepVersions(env), forgetExpiredModuli(env), forgetOldClientMinutes(database(env))]).then(() => undefined)),
} satisfies ExportedHandler<Env>;
