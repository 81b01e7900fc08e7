import { and, eq } from 'drizzle-orm';
import { InputError } from '../../core/errors/input-error.ts';
import { database, type Database } from '../db/client.ts';
import { datasets, versions } from '../db/schema.ts';
import type { Env } from '../env.ts';
import { BuildMessageSchema, type BuildMessage } from './build-message.ts';
import { runBuild, type BuildHooks } from './run-build.ts';

/** Attempts per build before it is marked failed (BUILD_ATTEMPTS; wrangler.toml max_retries must allow them). */
const DEFAULT_ATTEMPTS = 3;
const DEFAULT_RETRY_DELAY_SECONDS = 30;

/**
 * The build queue's consumer. One message builds one version. A failing attempt is retried
 * (the version stays "building" and shows the last error) until BUILD_ATTEMPTS deliveries have
 * failed; then, or at once for a fault in the input, the version is marked "failed" with its
 * error. A delivery after a Worker died mid-build (the queue redelivers it) starts over: blobs
 * are content-addressed and the row only turns "ready" after they are all written.
 */
export async function consumeBuilds(batch: MessageBatch<unknown>, env: Env, hooks: BuildHooks = {}): Promise<void> {
  const db = database(env);
  for (const message of batch.messages) {
    const parsed = BuildMessageSchema.safeParse(message.body);
    if (!parsed.success) {
      console.error('nearveil: dropping a malformed build message', message.id);
      message.ack();
      continue;
    }
    const outcome = await buildOnce(env, db, parsed.data, message.attempts, hooks);
    if (outcome === 'retry') message.retry({ delaySeconds: retryDelay(env) });
    else message.ack();
  }
}

async function buildOnce(env: Env, db: Database, job: BuildMessage, attempt: number, hooks: BuildHooks): Promise<'done' | 'retry'> {
  const [row] = await db
    .select({ dataset: datasets, version: versions })
    .from(versions)
    .innerJoin(datasets, eq(datasets.id, versions.datasetId))
    .where(and(eq(versions.datasetId, job.datasetId), eq(versions.number, job.version)));
  // Gone, finished or failed meanwhile: a duplicate or stale delivery has nothing to do.
  if (!row || row.version.state !== 'building') return 'done';
  const attempts = maxAttempts(env);
  const where = and(eq(versions.datasetId, job.datasetId), eq(versions.number, job.version), eq(versions.state, 'building'));
  // A build resumed after its Worker died (queue-build.ts, resumeIfSilent) comes as a new
  // message: the row's count of attempts started keeps counting it.
  attempt = Math.max(attempt, row.version.buildAttempts + 1);
  // A deleted dataset answers nothing: building it would only leave blobs for the sweep.
  if (row.dataset.deletedAt !== null) {
    await db.update(versions).set({ state: 'failed', error: 'not built: the dataset was deleted' }).where(where);
    return 'done';
  }
  if (attempt > attempts) {
    await db.update(versions).set({ state: 'failed', error: `build interrupted: no attempt finished within ${attempts} deliveries` }).where(where);
    return 'done';
  }
  await db.update(versions).set({ buildAttempts: attempt }).where(where);
  try {
    await runBuild(env, db, row.dataset, row.version, job.layout, job.maxK, hooks);
    return 'done';
  } catch (err) {
    const reason = (err instanceof Error ? err.message : String(err)).slice(0, 500);
    const final = err instanceof InputError || err instanceof RangeError || attempt >= attempts;
    console.error(`nearveil: build of ${row.dataset.slug} v${job.version} failed (attempt ${attempt} of ${attempts})`, err);
    await db
      .update(versions)
      .set(final ? { state: 'failed', error: reason } : { error: `attempt ${attempt} of ${attempts} failed, retrying: ${reason}` })
      .where(where);
    return final ? 'done' : 'retry';
  }
}

function maxAttempts(env: Env): number {
  const n = Number(env.BUILD_ATTEMPTS ?? DEFAULT_ATTEMPTS);
  return Number.isSafeInteger(n) && n >= 1 ? n : DEFAULT_ATTEMPTS;
}

function retryDelay(env: Env): number {
  const n = Number(env.BUILD_RETRY_DELAY_SECONDS ?? DEFAULT_RETRY_DELAY_SECONDS);
  return Number.isFinite(n) && n >= 0 ? n : DEFAULT_RETRY_DELAY_SECONDS;
}
