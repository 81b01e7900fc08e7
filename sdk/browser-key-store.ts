import { keyPairFromJson, keyPairToJson, type PirKeyPairJson } from '../core/pir/key-json.ts';
import type { PirKeyPair } from '../core/pir/keys.ts';
import { decodeModulusProof } from '../core/pir/wire.ts';
import type { ClientKeyStore, StoredClientKey } from './client-key.ts';

/** The database a page's key lives in when the caller names none. */
export const DEFAULT_KEY_DATABASE = 'nearveil-client-keys';
/** One object store, one record per modulus size, keyed by the size (2048 or 3072). */
const OBJECT_STORE = 'client-keys';

export interface IndexedDbKeyStoreOptions {
  /** Database name (default 'nearveil-client-keys'): pages of one origin naming the same database share one key. */
  databaseName?: string;
  /** The IndexedDB factory (default `globalThis.indexedDB`). */
  indexedDB?: IDBFactory;
  /** Told when a stored record is refused and replaced by a new key (default `console.warn`). */
  warn?: (line: string) => void;
}

/**
 * The record as IndexedDB keeps it. The key pair is in the CLI's hex form (core/pir/key-json.ts),
 * so a record is read back through the same checks (n = p*q, p and q prime, w a non-residue);
 * the proof stays bytes and the times stay milliseconds since the epoch.
 */
interface KeyRecord {
  format: 1;
  key: PirKeyPairJson;
  createdAt: number;
  queries: number;
  proof: Uint8Array;
  registrations: Record<string, number>;
}

/**
 * Keeps the client's key in the browser's IndexedDB, so a page makes, proves and registers its
 * key once and reuses it on later visits until the key's lifetime ends; `forgetKey()` (the
 * store's `remove`) deletes it. The key never leaves the device: only its proof, which holds the
 * modulus and not its factors, is sent. The record holds the secret primes, readable by any
 * script the page's origin runs, so keep third-party scripts off pages that query.
 * A record that does not read back whole is refused with a line on `warn` and replaced by a new
 * key: it holds nothing worth keeping. Throws at once when the runtime has no IndexedDB.
 */
export function indexedDbKeyStore(options: IndexedDbKeyStoreOptions = {}): ClientKeyStore {
  const factory = options.indexedDB ?? (globalThis as { indexedDB?: IDBFactory }).indexedDB;
  if (!factory) {
    throw new Error('indexedDbKeyStore: this runtime has no IndexedDB; outside a browser use memoryKeyStore() or a ClientKeyStore of your own');
  }
  const name = options.databaseName ?? DEFAULT_KEY_DATABASE;
  const warn = options.warn ?? ((line: string) => console.warn(line));
  // Checking p and q for primality costs tens of ms: a key already checked by this page is not checked again.
  const checked = new Map<string, PirKeyPair>();
  let database: Promise<IDBDatabase> | null = null;
  const open = () => (database ??= openDatabase(factory, name, () => (database = null)));

  return {
    async load(bits) {
      const record = await request(await open(), 'readonly', (store) => store.get(bits));
      if (record === undefined) return null;
      try {
        return fromRecord(record, bits, checked);
      } catch (err) {
        warn(`nearveil: the client key in IndexedDB "${name}" is refused (${err instanceof Error ? err.message : String(err)}); a new key is made and registered in its place`);
        return null;
      }
    },
    async save(entry) {
      await request(await open(), 'readwrite', (store) => store.put(toRecord(entry), entry.key.modulusBits));
    },
    async remove(bits) {
      await request(await open(), 'readwrite', (store) => store.delete(bits));
    },
  };
}

function toRecord(entry: StoredClientKey): KeyRecord {
  return {
    format: 1,
    key: keyPairToJson(entry.key),
    createdAt: entry.createdAt,
    queries: entry.queries,
    proof: entry.proof.slice(),
    registrations: { ...entry.registrations },
  };
}

function fromRecord(value: unknown, bits: number, checked: Map<string, PirKeyPair>): StoredClientKey {
  if (typeof value !== 'object' || value === null || (value as { format?: unknown }).format !== 1) throw new RangeError('expected a record of format 1');
  const record = value as KeyRecord;
  const memo = `${record.key?.n}:${record.key?.p}:${record.key?.q}:${record.key?.w}`;
  const key = checked.get(memo) ?? keyPairFromJson(record.key);
  checked.set(memo, key);
  if (key.modulusBits !== bits) throw new RangeError(`expected a ${bits}-bit key, got ${key.modulusBits} bits`);
  if (!(record.proof instanceof Uint8Array) || decodeModulusProof(record.proof).n !== key.n) throw new RangeError('the stored proof is for another modulus');
  if (!Number.isFinite(record.createdAt) || !Number.isSafeInteger(record.queries) || record.queries < 0) throw new RangeError('bad createdAt or queries');
  const registrations = Object.entries(record.registrations ?? {});
  if (registrations.some(([, until]) => !Number.isFinite(until))) throw new RangeError('bad registration time');
  return { key, createdAt: record.createdAt, queries: record.queries, proof: record.proof, registrations: Object.fromEntries(registrations) };
}

/** Opens (and on first use creates) the database; `closed` runs when another tab upgrades it and this connection lets go. */
function openDatabase(factory: IDBFactory, name: string, closed: () => void): Promise<IDBDatabase> {
  return new Promise((resolve, reject) => {
    const opening = factory.open(name, 1);
    opening.onupgradeneeded = () => {
      if (!opening.result.objectStoreNames.contains(OBJECT_STORE)) opening.result.createObjectStore(OBJECT_STORE);
    };
    opening.onsuccess = () => {
      const db = opening.result;
      db.onversionchange = () => {
        db.close();
        closed();
      };
      resolve(db);
    };
    opening.onerror = () => reject(new Error(`indexedDbKeyStore: cannot open IndexedDB "${name}": ${opening.error?.message ?? 'unknown error'}`));
    opening.onblocked = () => reject(new Error(`indexedDbKeyStore: IndexedDB "${name}" is held open by an older page of this site; close its other tabs`));
  });
}

/** One request in its own transaction; resolves when the transaction has committed, so a saved key is on disk. */
function request<T>(db: IDBDatabase, mode: IDBTransactionMode, make: (store: IDBObjectStore) => IDBRequest<T>): Promise<T> {
  return new Promise((resolve, reject) => {
    const tx = db.transaction(OBJECT_STORE, mode);
    const req = make(tx.objectStore(OBJECT_STORE));
    tx.oncomplete = () => resolve(req.result);
    tx.onerror = () => reject(new Error(`indexedDbKeyStore: ${mode} failed: ${tx.error?.message ?? req.error?.message ?? 'unknown error'}`));
    tx.onabort = () => reject(new Error(`indexedDbKeyStore: ${mode} aborted: ${tx.error?.message ?? 'unknown error'}`));
  });
}
