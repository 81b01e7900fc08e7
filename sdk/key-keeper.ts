import type { PirKeyPair } from '../core/pir/keys.ts';
import { clientKeyFor, keyExpired, newClientKey, type ClientKeyStore, type KeyLifetime, type KeySetupCost, type StoredClientKey } from './client-key.ts';
import { send, type HttpOptions } from './http.ts';

/** What getting the key ready cost on this call, when it cost anything. */
export interface KeyReadyCost extends Partial<KeySetupCost> {
  /** Time of the registration request (POST /v1/moduli), server check included. */
  registerMs?: number;
}

export interface KeyKeeper {
  /** The key to query with, registered with this server; a new key first when the old one expired. */
  ready(): Promise<{ entry: StoredClientKey; cost: KeyReadyCost | null }>;
  /** The server said it does not know the modulus (it expired there, or it is another server). */
  unregistered(): Promise<void>;
  /** Counts queries sent with the key, for its lifetime. */
  used(entry: StoredClientKey, queries: number): Promise<void>;
  /** Drops the stored key: the next query makes a new one. */
  forget(): Promise<void>;
}

/**
 * The client's key lifecycle: made (and proven) on first use, registered once with each server
 * (POST /v1/moduli, core/modulus-proof), replaced after its lifetime. A key pair given by the
 * caller (`fixedKey`) is used as it is and never replaced. Calls are served one at a time, so
 * concurrent queries of a new client make one key and one registration.
 */
export function keyKeeper(options: { http: HttpOptions; store: ClientKeyStore; lifetime: KeyLifetime; modulusBits: number; fixedKey?: PirKeyPair }): KeyKeeper {
  const { http, store, lifetime, modulusBits, fixedKey } = options;
  const server = new URL(http.endpoint).href;
  let queue: Promise<unknown> = Promise.resolve();
  const serially = <T>(task: () => Promise<T>): Promise<T> => {
    const run = queue.then(task);
    queue = run.catch(() => undefined);
    return run;
  };

  async function current(): Promise<{ entry: StoredClientKey; cost: KeyReadyCost | null }> {
    const stored = await store.load(modulusBits);
    if (stored && (fixedKey ? stored.key.n === fixedKey.n : !keyExpired(stored, lifetime))) return { entry: stored, cost: null };
    if (fixedKey) {
      const t0 = performance.now();
      const entry = await clientKeyFor(fixedKey);
      return { entry, cost: { proveMs: performance.now() - t0, proofBytes: entry.proof.length } };
    }
    const made = await newClientKey(modulusBits);
    return { entry: made.entry, cost: made.cost };
  }

  return {
    ready: () =>
      serially(async () => {
        const { entry, cost } = await current();
        const known = entry.registrations[server];
        if (known !== undefined && known > Date.now()) {
          if (cost) await store.save(entry);
          return { entry, cost };
        }
        const t0 = performance.now();
        const response = await send(http, 'POST', 'v1/moduli', entry.proof as Uint8Array<ArrayBuffer>, 'application/octet-stream');
        const { modulus } = (await response.json()) as { modulus: { expiresAt: string } };
        entry.registrations[server] = Date.parse(modulus.expiresAt);
        await store.save(entry);
        return { entry, cost: { ...cost, registerMs: performance.now() - t0 } };
      }),
    unregistered: () =>
      serially(async () => {
        const entry = await store.load(modulusBits);
        if (!entry || entry.registrations[server] === undefined) return;
        delete entry.registrations[server];
        await store.save(entry);
      }),
    used: (entry, queries) =>
      serially(async () => {
        entry.queries += queries;
        await store.save(entry);
      }),
    forget: () => serially(() => store.remove(modulusBits)),
  };
}
