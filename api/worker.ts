import { app } from './app.ts';
import { consumeBuilds } from './builds/consume-builds.ts';
import { sweepVersions } from './datasets/retire-versions.ts';
import type { Env } from './env.ts';

export { AnswerPart } from './query/answer-part.ts';

export default {
  fetch: (request, env, ctx) => app.fetch(request, env, ctx),
  /** The build queue's consumer (wrangler.toml [[queues.consumers]]). */
  queue: (batch, env) => consumeBuilds(batch, env),
  /** The cron trigger: retire versions past their grace, collect their blobs, fail dead builds. */
  scheduled: (_controller, env, ctx) => ctx.waitUntil(sweepVersions(env).then(() => undefined)),
} satisfies ExportedHandler<Env>;
