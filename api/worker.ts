import { app } from './app.ts';

export { AnswerPart } from './query/answer-part.ts';
import type { Env } from './env.ts';

export default {
  fetch: (request, env, ctx) => app.fetch(request, env, ctx),
} satisfies ExportedHandler<Env>;
