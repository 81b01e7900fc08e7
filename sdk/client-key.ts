import { proveModulus } from '../core/modulus-proof/prove-modulus.ts';
import { generateKeyPair, type PirKeyPair } from '../core/pir/keys.ts';
import { encodeModulusProof } from '../core/pir/wire.ts';

/**
 * When a client key is replaced by a new one. Every query a key makes carries the same modulus,
 * so the server can tell that those queries come from one client (never where it was): a new
 * key starts a new, unlinked history. Defaults: a week or 1,000 queries, whichever comes first.
 */
export interface KeyLifetime {
  days: number;
  queries: number;
}

export const DEFAULT_KEY_LIFETIME: KeyLifetime = { days: 7, queries: 1000 };

/** A client key as kept between uses: the key pair, its modulus proof, and its use so far. */
export interface StoredClientKey {
  key: PirKeyPair;
  /** Milliseconds since the epoch. */
  createdAt: number;
  /** Private queries sent with this key (every round counts one). */
  queries: number;
  /** The modulus proof in its wire bytes (core/pir/WIRE.md); made once with the key. */
  proof: Uint8Array;
  /** Per server (its endpoint URL): when the server forgets the registration, ms since the epoch. */
  registrations: Record<string, number>;
}

/** Where a client keeps its key between runs: memory by default, a file for the CLI. */
export interface ClientKeyStore {
  load(modulusBits: number): Promise<StoredClientKey | null>;
  save(entry: StoredClientKey): Promise<void>;
  remove(modulusBits: number): Promise<void>;
}

/** Keeps keys in memory, for one client object's lifetime. */
export function memoryKeyStore(): ClientKeyStore {
  const keys = new Map<number, StoredClientKey>();
  return {
    async load(bits) {
      return keys.get(bits) ?? null;
    },
    async save(entry) {
      keys.set(entry.key.modulusBits, entry);
    },
    async remove(bits) {
      keys.delete(bits);
    },
  };
}

/** What making a new key cost this client (reported in a query's cost). */
export interface KeySetupCost {
  generateMs: number;
  proveMs: number;
  proofBytes: number;
}

/** A new stored key: a fresh key pair and its proof. */
export async function newClientKey(modulusBits: number, now = Date.now()): Promise<{ entry: StoredClientKey; cost: KeySetupCost }> {
  const t0 = performance.now();
  const key = await generateKeyPair({ modulusBits });
  const t1 = performance.now();
  const entry = await clientKeyFor(key, now);
  return { entry, cost: { generateMs: t1 - t0, proveMs: performance.now() - t1, proofBytes: entry.proof.length } };
}

/** A stored key around a key pair made elsewhere (proved here, never used yet). */
export async function clientKeyFor(key: PirKeyPair, now = Date.now()): Promise<StoredClientKey> {
  return { key, createdAt: now, queries: 0, proof: encodeModulusProof(proveModulus(key)), registrations: {} };
}

/** True when the key has lived its days or made its queries. */
export function keyExpired(entry: StoredClientKey, lifetime: KeyLifetime, now = Date.now()): boolean {
  return now - entry.createdAt >= lifetime.days * 86_400_000 || entry.queries >= lifetime.queries;
}

/**
 * A caller's lifetime with the defaults filled in: days a number > 0 (fractions allowed), queries
 * an integer >= 1. Throws RangeError naming the field otherwise.
 */
export function checkKeyLifetime(lifetime: Partial<KeyLifetime> | undefined): KeyLifetime {
  const out = { ...DEFAULT_KEY_LIFETIME, ...lifetime };
  if (!(out.days > 0) || !Number.isFinite(out.days)) throw new RangeError(`keyLifetime.days: expected a number > 0, got ${out.days}`);
  if (!Number.isSafeInteger(out.queries) || out.queries < 1) throw new RangeError(`keyLifetime.queries: expected an integer >= 1, got ${out.queries}`);
  return out;
}
