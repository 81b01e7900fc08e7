import { and, eq, isNull } from 'drizzle-orm';
import { DETAILS_SECRET_BYTES } from '../../core/details/seal.ts';
import { hex } from '../auth/secrets.ts';
import type { Database } from '../db/client.ts';
import { versions } from '../db/schema.ts';
import type { VersionRow } from './repository.ts';

const HEX = /^[0-9a-f]{64}$/;

/**
 * The version's details secret (32 bytes from crypto.getRandomValues, a CSPRNG), drawn on the
 * first build and kept in D1 only, so a rebuild of the version derives the same record keys.
 * Two concurrent first builds cannot both win: only a row whose secret is still empty is set,
 * and everyone reads back the one stored.
 */
export async function versionDetailsSecret(db: Database, version: VersionRow): Promise<Uint8Array> {
  if (version.detailsSecret === null) {
    const fresh = crypto.getRandomValues(new Uint8Array(DETAILS_SECRET_BYTES));
    await db
      .update(versions)
      .set({ detailsSecret: hex(fresh) })
      .where(and(eq(versions.datasetId, version.datasetId), eq(versions.number, version.number), isNull(versions.detailsSecret)));
  }
  const [row] = await db
    .select({ secret: versions.detailsSecret })
    .from(versions)
    .where(and(eq(versions.datasetId, version.datasetId), eq(versions.number, version.number)))
    .limit(1);
  const stored = row?.secret ?? '';
  if (!HEX.test(stored)) throw new Error(`version ${version.number} has no readable details secret`);
  return Uint8Array.from(stored.match(/../g)!, (h) => parseInt(h, 16));
}
