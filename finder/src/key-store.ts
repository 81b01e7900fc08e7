import { DEFAULT_KEY_LIFETIME, indexedDbKeyStore, memoryKeyStore, type ClientKeyStore, type StoredClientKey } from '../../sdk/browser.ts';

export interface WatchedKeyStore {
  store: ClientKeyStore;
  /** False when this browser keeps no key between visits (no IndexedDB, or it refused). */
  persistent(): boolean;
}

/**
 * The page's key store: IndexedDB, so the costly key is made once per device, watched so the page
 * can say "preparing a private key" before the client makes one. `making` runs when no usable key
 * is stored, and may wait (for a paint) before the work starts; `made` when that key is saved. Should IndexedDB be
 * missing or refuse (some private-browsing modes), keys live in memory for this visit instead.
 */
export function watchedKeyStore(hooks: { making(): Promise<void>; made(): void }): WatchedKeyStore {
  const memory = memoryKeyStore();
  let inner: ClientKeyStore;
  let kept = true;
  let pending = false;
  try {
    inner = indexedDbKeyStore();
  } catch {
    inner = memory;
    kept = false;
  }
  const guarded = async <T>(task: (store: ClientKeyStore) => Promise<T>): Promise<T> => {
    try {
      return await task(inner);
    } catch (err) {
      if (inner === memory) throw err;
      inner = memory;
      kept = false;
      return task(inner);
    }
  };
  return {
    persistent: () => kept,
    store: {
      async load(bits) {
        const entry = await guarded((s) => s.load(bits));
        if (entry === null || outlived(entry)) {
          pending = true;
          await hooks.making();
        }
        return entry;
      },
      async save(entry) {
        await guarded((s) => s.save(entry));
        if (pending) {
          pending = false;
          hooks.made();
        }
      },
      remove: (bits) => guarded((s) => s.remove(bits)),
    },
  };
}

/** The client's own rule (default lifetime): a key past it is replaced, which costs as much as a first one. */
function outlived(entry: StoredClientKey, now = Date.now()): boolean {
  return now - entry.createdAt >= DEFAULT_KEY_LIFETIME.days * 86_400_000 || entry.queries >= DEFAULT_KEY_LIFETIME.queries;
}
