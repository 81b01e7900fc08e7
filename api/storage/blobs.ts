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
