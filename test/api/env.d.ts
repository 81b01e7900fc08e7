import type { D1Migration } from '@cloudflare/vitest-pool-workers';
import type { Env } from '../../api/env.ts';

declare global {
  namespace Cloudflare {
    interface Env {
      DB: D1Database;
      BLOBS: R2Bucket;
      TEST_MIGRATIONS: D1Migration[];
      FANOUT_PRODUCTS_PER_PART: string;
      BUILDS: Queue;
      VERSION_GRACE_SECONDS: string;
      BUILD_ATTEMPTS: string;
    }
    // Types `exports` of cloudflare:workers: the Worker's entry module, reached in-process.
    interface GlobalProps {
      mainModule: typeof import('../../api/worker.ts');
    }
  }
}
export type { Env };
