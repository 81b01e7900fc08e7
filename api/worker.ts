import { app } from './app.ts';
import type { Env } from './env.ts';

export default {
  fetch: (request, env, ctx) => app.fetch(request, env, ctx),
} satisfies ExportedHandler<Env>;
