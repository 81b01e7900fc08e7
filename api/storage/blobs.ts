import type { Env } from '../env.ts';

/**
 * Object storage layout (R2). Site tables and matrices are content-addressed by SHA-256, so a
 * rewrite of the same bytes is harmless and a half-finished build never clobbers a live blob.
 * Manifests are keyed by dataset id and version and written after the matrix they describe.
 */
export const blobKeys = {
  table: (sha256: string) => `tables/${sha256}.csv`,
  matrix: (sha256: string) => `matrices/${sha256}.nvm`,
  manifest: (datasetId: string, version: number) => `manifests/${datasetId}/${version}.json`,
  /** A version's sealed records (core/details/sealed-file.ts), by SHA-256. Details matrices are matrices. */
  sealed: (sha256: string) => `sealed/${sha256}.nvs`,
};

export async function putBlob(env: Env, key: string, body: Uint8Array | string): Promise<void> {
  await env.BLOBS.put(key, body);
}

export async function getBlobBytes(env: Env, key: string): Promise<Uint8Array | null> {
  const object = await env.BLOBS.get(key);
  return object ? new Uint8Array(await object.arrayBuffer()) : null;
}

export async function getBlobText(env: Env, key: string): Promise<string | null> {
  const object = await env.BLOBS.get(key);
  return object ? object.text() : null;
}

/** The stored object as a stream, for large blobs served whole (the sealed file); null when absent. */
export async function getBlobStream(env: Env, key: string): Promise<{ body: ReadableStream; size: number } | null> {
  const object = await env.BLOBS.get(key);
  return object ? { body: object.body, size: object.size } : null;
}
